// Throughput of the foundation's building blocks. Run after a build:
//   npx -y pnpm@12.4.2 bench
// Each figure is the median of several runs, with the spread (min–max).
import { complexArray, fft, Rng, simulate } from '../packages/core/dist/index.js';
import { bench, machine, saveSection } from './harness.mjs';

const records = [];
function measure(label, units, perRun, fn, runs = 5) {
  records.push(bench(label, { units, perRun, runs }, fn));
}

console.log(`machine: ${machine().cpu}, Node ${process.version}`);
for (const n of [4096, 65536, 1 << 20, 3 * 4096, 100_000]) {
  const x = complexArray(n);
  new Rng(1).fillGaussian(x);
  const out = complexArray(n);
  measure(`fft N = ${n}${(n & (n - 1)) === 0 ? '' : ' (Bluestein)'}`, 'samples', n, () => fft(x, out));
}
const symbols = 65536;
measure(
  'simulate DP-16QAM, 2.5 Sa/symbol, all impairments',
  'symbols',
  symbols,
  () =>
    simulate({
      seed: 1,
      modulation: '16qam',
      symbols,
      symbolRate: 32e9,
      samplesPerSymbol: 2.5,
      channel: { esN0Db: 18, sop: 'random', dgdPs: 10, linewidthHz: 1e5, freqOffsetHz: 1e9, dispersionPsPerNm: 1360 },
      receiver: { iqPhaseDeg: { x: 3 }, skewPs: { xq: 2 }, adc: { bits: 8 } },
    }),
  3,
);

// The default receiver, end to end from the four channels to the figures.
{
  const { analyzeCapture } = await import('../packages/metrics/dist/index.js');
  const n = 2 ** 17;
  const cap = simulate({
    seed: 3,
    modulation: '16qam',
    symbols: n,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    channel: { esN0Db: 18, sop: 'random', dgdPs: 10, linewidthHz: 1e5, freqOffsetHz: 1e9, dispersionPsPerNm: 1360 },
  });
  const block = { domain: 'channels', ...cap.channels, samplesPerSymbol: 2.5 };
  const settings = { modulation: '16qam', symbolRate: 32e9, sampleRate: 80e9, dispersionPsPerNm: 1360 };
  measure(
    'default receiver DP-16QAM, 2.5 Sa/symbol (2^17 symbols)',
    'symbols',
    n,
    () => analyzeCapture([block], settings, cap.reference),
    3,
  );
}
saveSection('foundation', records);
