// Where the default receiver spends its time: each stage of the chain in
// order, fed the previous stage's whole output as one block, then the
// measurement (streaming, with a reference as long as the capture), in
// microseconds per symbol, on 2^18 seeded DP-16QAM symbols at 2.5 samples per
// symbol from memory (`PROFILE_BENCH_SYMBOLS` changes the size). The chain is
// run twice and the second run timed (the first compiles the hot loops).
// Stage times include their fixed costs (the blind dispersion scan, the skew
// and coarse frequency estimates), which do not grow with the capture.
// Part of `npx -y pnpm@12.4.2 bench`; run after a build. It imports only the
// built packages' public entry points, so the same file profiles any commit.
import { defaultReceiver, simulate } from '../packages/core/dist/index.js';
import { MeasurementStream } from '../packages/metrics/dist/index.js';
import { machine, saveSection } from './harness.mjs';

const N = Number(process.env.PROFILE_BENCH_SYMBOLS ?? 2 ** 18);
const SLOTS = [
  'normalize',
  'orthogonalize',
  'deskew',
  'combine',
  'resample',
  'dispersion',
  'coarseFrequency',
  'matchedFilter',
  'timing',
  'equalizer',
  'frequency',
  'phase',
  'decisionEqualizer',
];

function joined(a, b) {
  if (!b) return a;
  const cat = (p, q) => {
    const out = new Float64Array(p.length + q.length);
    out.set(p);
    out.set(q, p.length);
    return out;
  };
  if (a.domain === 'channels')
    return { ...a, xi: cat(a.xi, b.xi), xq: cat(a.xq, b.xq), yi: cat(a.yi, b.yi), yq: cat(a.yq, b.yq) };
  return { ...a, x: cat(a.x, b.x), y: cat(a.y, b.y) };
}

function profileOnce(cap) {
  const rx = defaultReceiver({ modulation: '16qam', symbolRate: 32e9, sampleRate: 80e9 });
  let block = { domain: 'channels', ...cap.channels, samplesPerSymbol: 2.5 };
  const times = [];
  for (const slot of SLOTS) {
    const stage = rx.stages[slot];
    if (!stage) continue;
    const t0 = performance.now();
    block = joined(stage.process(block), stage.flush());
    times.push([slot, performance.now() - t0]);
  }
  const t0 = performance.now();
  const stream = new MeasurementStream(cap.reference, '16qam', { skipSymbols: 2048, symbolRate: 32e9 });
  stream.add({ x: block.x, y: block.y });
  const m = stream.finish();
  times.push(['measurement', performance.now() - t0]);
  return { times, ber: m.ber };
}

const m = machine();
console.log(`machine: ${m.cpu} (${m.cores} cores), Node ${m.node}`);
const cap = simulate({
  seed: 1,
  modulation: '16qam',
  symbols: N,
  symbolRate: 32e9,
  samplesPerSymbol: 2.5,
  channel: { sop: 'random', esN0Db: 17, linewidthHz: 100e3, freqOffsetHz: 1e9, dgdPs: 10, dispersionPsPerNm: 1360 },
});
profileOnce(cap);
const { times, ber } = profileOnce(cap);
const total = times.reduce((a, [, t]) => a + t, 0);
const notes = [];
for (const [slot, t] of [...times, ['total', total]]) {
  const line = `${slot.padEnd(18)} ${((t * 1e3) / N).toFixed(2).padStart(6)} µs/symbol  ${t.toFixed(0).padStart(6)} ms`;
  console.log(line);
  notes.push(line.replace(/ +/g, ' '));
}
console.log(`BER ${ber.toExponential(2)}`);
saveSection('profile', [], { notes: [`${N} symbols, BER ${ber.toExponential(2)}`, ...notes] });
