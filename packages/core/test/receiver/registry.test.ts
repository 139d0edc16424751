import { describe, expect, it } from 'vitest';
import {
  ALGORITHMS,
  blindPhaseSearch,
  butterflyEqualizer,
  cmaRule,
  constellation,
  ddLmsRule,
  defaultReceiver,
  OptionError,
  type ReceiverSettings,
  rebuildReceiver,
  rebuildStage,
  STAGE_NAMES,
  simulate,
} from '../../src/index.js';
import { channelBlock, runAll, toTwoSps } from '../support/chain.js';

// A described stage must be enough to build it again (the reproducibility record promises it), and a
// chain's algorithms are chosen by name. Checked on the outputs themselves: a rebuilt chain, or a rule
// given as an object, gives the very same symbols, bit for bit.

const base = { symbolRate: 32e9, sampleRate: 80e9 } as const;
const chains: ReceiverSettings[] = [
  { ...base, modulation: 'qpsk' },
  { ...base, modulation: '16qam', dispersionPsPerNm: 1360 },
  { ...base, modulation: '64qam', skewPs: { xq: 1.5 }, estimateDispersion: false },
  { ...base, modulation: '16qam', phaseRecovery: 'viterbi-viterbi', equalizerRule: 'cma', orthogonalization: 'lowdin' },
  { ...base, modulation: '16qam', options: { decisionEqualizer: false, phase: { halfWindow: 10, testPhases: 48 } } },
];

describe('the stage registry', () => {
  it('rebuilds every chain from its record: the same record again', () => {
    for (const settings of chains) {
      const record = defaultReceiver(settings).describe();
      expect(rebuildReceiver(record).describe()).toEqual(record);
    }
  });

  it('rebuilds a chain that gives the same symbols, bit for bit', () => {
    const cap = simulate({
      seed: 21,
      modulation: '16qam',
      symbols: 12000,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      channel: { esN0Db: 16, sop: 'random', linewidthHz: 1e5, freqOffsetHz: 3e8, dispersionPsPerNm: 500 },
    });
    const settings: ReceiverSettings = { ...base, modulation: '16qam', dispersionPsPerNm: 500 };
    const first = runAll<'symbols'>(defaultReceiver(settings), channelBlock(cap));
    const again = runAll<'symbols'>(rebuildReceiver(defaultReceiver(settings).describe()), channelBlock(cap));
    expect(first.x.length).toBeGreaterThan(2 * 10000);
    expect(again.x).toEqual(first.x);
    expect(again.y).toEqual(first.y);
  });

  it('knows every stage of the default chains by name, and refuses what it cannot build', () => {
    const names = new Set(chains.flatMap((s) => (defaultReceiver(s).describe().stages ?? []).map((r) => r.stage)));
    for (const n of names) expect(STAGE_NAMES).toContain(n);
    expect(() => rebuildStage({ stage: 'kalman-phase', options: {} })).toThrow(OptionError);
    const trained = butterflyEqualizer({
      modulation: 'qpsk',
      training: {
        x: { symbols: new Float64Array([1, 0, 0, 1]), delay: 0, conjugated: false },
        y: { symbols: new Float64Array([1, 0, 0, 1]), delay: 0, conjugated: false },
      },
    });
    expect(() => rebuildStage(trained.describe())).toThrow(/training/);
    // A stage's own options out of range are its own error, as when it is built directly.
    const bps = blindPhaseSearch({ modulation: '16qam' }).describe();
    expect(() => rebuildStage({ ...bps, options: { ...bps.options, testPhases: 0 } })).toThrow(OptionError);
  });
});

describe('algorithms by name', () => {
  it('chooses the phase recovery, the equalizer rule and the orthogonalization', () => {
    const rx = defaultReceiver({
      ...base,
      modulation: '16qam',
      phaseRecovery: 'viterbi-viterbi',
      equalizerRule: 'cma',
      orthogonalization: 'lowdin',
    });
    expect(rx.stages.phase.name).toBe('viterbi-viterbi');
    expect(rx.stages.equalizer.describe().options.blindRule).toBe('cma');
    expect(rx.stages.orthogonalize.describe().options.method).toBe('lowdin');
    expect(rx.settings).toMatchObject({ phaseRecovery: 'viterbi-viterbi', equalizerRule: 'cma', orthogonalization: 'lowdin' });
    // The defaults follow the modulation.
    const q = defaultReceiver({ ...base, modulation: 'qpsk' }).settings;
    expect([q.phaseRecovery, q.equalizerRule, q.orthogonalization]).toEqual(['viterbi-viterbi', 'cma', 'gsop']);
    expect(ALGORITHMS.phaseRecovery).toContain(defaultReceiver({ ...base, modulation: '64qam' }).settings.phaseRecovery);
  });

  it('names the choices when a name is wrong', () => {
    const wrong = { ...base, modulation: '16qam', phaseRecovery: 'kalman' } as unknown as ReceiverSettings;
    expect(() => defaultReceiver(wrong)).toThrow(/phaseRecovery.*viterbi-viterbi, blind-phase-search.*kalman/);
  });
});

describe('update rules as objects', () => {
  const cap = simulate({
    seed: 22,
    modulation: '16qam',
    symbols: 16384,
    symbolRate: 32e9,
    samplesPerSymbol: 2,
    channel: { esN0Db: 18, sop: 'random', linewidthHz: 0, freqOffsetHz: 2e7 },
  });
  const input = toTwoSps(cap);
  const run = (o: Parameters<typeof butterflyEqualizer>[0]) => runAll<'symbols'>(butterflyEqualizer(o), input);

  it('a CMA rule object adapts as the named rule at the same step', () => {
    const named = run({ modulation: '16qam', blindRule: 'cma', stepSize: { cma: 2e-4 } });
    // Pre-convergence anneals its step to stepSize.cma whatever the rule after it, so that is set alike.
    const object = run({ modulation: '16qam', blindRule: cmaRule(constellation('16qam'), 2e-4), stepSize: { cma: 2e-4 } });
    expect(object.x).toEqual(named.x);
    expect(object.y).toEqual(named.y);
  });

  it('DD-LMS given as a rule object adapts as the built-in one, its carrier loop in the diagnostics', () => {
    const ddLms = { startSymbol: 9000 };
    const builtIn = butterflyEqualizer({ modulation: '16qam', ddLms, stepSize: { ddLms: 2e-4 } });
    const given = butterflyEqualizer({
      modulation: '16qam',
      ddLms: { ...ddLms, rule: ddLmsRule('16qam', 2e-4) },
    });
    const a = runAll<'symbols'>(builtIn, input);
    const b = runAll<'symbols'>(given, input);
    expect(b.x).toEqual(a.x);
    expect(given.diagnostics().carrierLoop).toEqual(builtIn.diagnostics().carrierLoop);
    expect(given.diagnostics().carrierLoop).not.toBeNull();
    expect(given.describe().options.ddLms).toMatchObject({ rule: 'dd-lms' });
  });

  it('refuses something that is not a rule', () => {
    expect(() => butterflyEqualizer({ modulation: 'qpsk', blindRule: { name: 'x' } as never })).toThrow(OptionError);
  });
});
