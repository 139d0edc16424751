// Throughput of each receiver stage on its own, in symbols per second, on
// seeded synthetic DP-16QAM from the simulator. Run after a build (part of
// `npx -y pnpm@12.4.2 bench`). Each stage gets a fresh instance per run (built
// outside the timing) and the whole record as one block, then flush().
// `STAGE_BENCH_SYMBOLS` changes the symbol count (default 2^16); `BENCH_RESULTS_DIR`
// writes results.json and the table to another folder (see harness.mjs).
import { mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import {
  blindPhaseSearch,
  butterflyEqualizer,
  compensateDispersion,
  constellation,
  decide,
  frequencyOffsetRecovery,
  fromParts,
  resampleToTwoSps,
  simulate,
  viterbiViterbi,
} from '../packages/core/dist/index.js';
import { readArrowCapture, writeCaptureArrow } from '../packages/io/dist/index.js';
import { measure } from '../packages/metrics/dist/index.js';
import { bench, machine, saveSection } from './harness.mjs';
import { runNative } from './native.mjs';

const N = Number(process.env.STAGE_BENCH_SYMBOLS ?? 2 ** 16);
const RUNS = 5;
// Symbols left out of the measurement (equalizer and carrier settling); a quarter of a short run.
const SKIP = Math.min(4000, N >> 2);
const m = machine();
console.log(`machine: ${m.cpu} (${m.cores} cores), Node ${m.node}`);

const cap = simulate({
  seed: 11,
  modulation: '16qam',
  symbols: N,
  symbolRate: 32e9,
  samplesPerSymbol: 2.5,
  channel: { esN0Db: 18, sop: 'random', linewidthHz: 1e5, freqOffsetHz: 1e8, dispersionPsPerNm: 1360 },
});
const { xi, xq, yi, yq } = cap.channels;
const field = { domain: 'field', x: fromParts(xi, xq), y: fromParts(yi, yq), sampleRate: 80e9, samplesPerSymbol: 2.5 };
const pass = (stage, block) => {
  const out = stage.process(block);
  stage.flush();
  return out;
};
const records = [];
const run = (label, params, make, input) =>
  records.push(
    bench(label, { units: 'symbols', perRun: N, params: { symbols: N, ...params }, runs: RUNS, prepare: make }, (s) =>
      pass(s, input),
    ),
  );

// Inputs of each stage: the output of the stage before it, made once.
const twoSpsRaw = pass(resampleToTwoSps({ symbolRate: 32e9 }), field);
const twoSps = pass(compensateDispersion({ dispersionPsPerNm: 1360 }), twoSpsRaw);
const eqSettings = { modulation: '16qam', taps: 15 };
const equalized = pass(butterflyEqualizer({ ...eqSettings, blindRule: 'rde' }), twoSps);
const freqDone = pass(frequencyOffsetRecovery(), equalized);
const phased = pass(blindPhaseSearch({ modulation: '16qam', testPhases: 32, halfWindow: 16 }), freqDone);

run('resample 2.5 → 2 Sa/symbol', { from: '2.5 Sa/symbol' }, () => resampleToTwoSps({ symbolRate: 32e9 }), field);
for (const d of [1360, 17000]) {
  run(
    `CD compensation ${d.toLocaleString('en')} ps/nm`,
    { dispersionPsPerNm: d },
    () => compensateDispersion({ dispersionPsPerNm: d }),
    twoSpsRaw,
  );
}
for (const rule of ['cma', 'rde']) {
  run(
    `2×2 equalizer, ${rule.toUpperCase()}`,
    { taps: 15, sps: 2, rule },
    () => butterflyEqualizer({ ...eqSettings, blindRule: rule }),
    twoSps,
  );
}
// Like for like with the C reference: CMA from the first symbol, no buffered passes over the start
// (the default stage adapts on the first 8,192 symbols twice more before its output run).
run(
  '2×2 equalizer, CMA, no passes over the start (the work of the C)',
  { taps: 15, sps: 2, rule: 'cma', passes: 0 },
  () => butterflyEqualizer({ ...eqSettings, blindRule: 'cma', convergeOnStart: { symbols: 8192, passes: 0 } }),
  twoSps,
);
run('frequency-offset estimation + removal', {}, () => frequencyOffsetRecovery(), equalized);
run('Viterbi–Viterbi (16QAM)', { halfWindow: 16 }, () => viterbiViterbi({ modulation: '16qam', halfWindow: 16 }), freqDone);
run(
  'BPS, both polarizations',
  { testPhases: 32, halfWindow: 16 },
  () => blindPhaseSearch({ modulation: '16qam', testPhases: 32, halfWindow: 16 }),
  freqDone,
);
const c16 = constellation('16qam');
const labels = new Uint8Array(phased.x.length / 2);
records.push(
  bench(
    'decisions (nearest point), both polarizations',
    { units: 'symbols', perRun: phased.x.length / 2, params: { modulation: '16qam' }, runs: RUNS },
    () => {
      decide(c16, phased.x, labels);
      decide(c16, phased.y, labels);
    },
  ),
);
records.push(
  bench(
    'sync + metrics (measure)',
    { units: 'symbols', perRun: phased.x.length / 2, params: { modulation: '16qam', skipSymbols: SKIP }, runs: 3 },
    () => measure(phased, cap.reference, '16qam', { skipSymbols: SKIP, symbolRate: 32e9 }),
  ),
);

const dir = mkdtempSync(join(tmpdir(), 'intradyne-stage-bench-'));
try {
  const path = join(dir, 'capture.arrow');
  writeCaptureArrow(path, cap.channels);
  const bytes = statSync(path).size;
  const samples = xi.length;
  const load = () => {
    let n = 0;
    for (const b of readArrowCapture(path)) n += b.xi.length;
    if (n !== samples) throw new Error(`Arrow load read ${n} samples, ${samples} written`);
  };
  records.push(
    bench(
      'Arrow load (readArrowCapture)',
      { units: 'samples', perRun: samples, params: { MB: (bytes / 1e6).toFixed(1) }, runs: RUNS },
      load,
    ),
  );
  const native = runNative(dir, { twoSps, freqDone, records, runs: RUNS });
  saveSection('stages', records, { notes: native.notes });
} finally {
  rmSync(dir, { recursive: true, force: true });
}
