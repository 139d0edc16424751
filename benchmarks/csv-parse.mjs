// Throughput of the capture CSV loader against a naive split/Number parser.
// Run after a build (part of `npx -y pnpm@12.4.2 bench`). Writes a temporary
// capture CSV with the io writer (shortest round-trip numbers, 16–17
// significant digits: the slow case for a number parser), reads it back both
// ways, and checks that both read the same numbers.
import { mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { cpus, tmpdir } from 'node:os';
import { join } from 'node:path';
import { Rng } from '../packages/core/dist/index.js';
import { readCsvCapture, writeCaptureCsv } from '../packages/io/dist/index.js';
import { report as record, saveSection } from './harness.mjs';

const SAMPLES = Number(process.env.CSV_BENCH_SAMPLES ?? 1_000_000);
const RUNS = 3;

function naive(path) {
  const lines = readFileSync(path, 'latin1').split('\n');
  let i = 0;
  while (lines[i].startsWith('#')) i++;
  const header = lines[i++].split(',');
  const cols = ['xi', 'xq', 'yi', 'yq'].map((c) => header.indexOf(c));
  const out = cols.map(() => new Float64Array(lines.length));
  let n = 0;
  for (; i < lines.length; i++) {
    if (lines[i] === '') continue;
    const cells = lines[i].split(',');
    for (let c = 0; c < 4; c++) out[c][n] = Number(cells[cols[c]]);
    n++;
  }
  return out.map((a) => a.subarray(0, n));
}

function ours(path) {
  let n = 0;
  let check = 0;
  for (const b of readCsvCapture(path, { sampleRate: 64e9 })) {
    n += b.xi.length;
    check += b.xi[0] + b.yq[b.yq.length - 1];
  }
  return { n, check };
}

function time(fn) {
  const t0 = process.hrtime.bigint();
  const r = fn();
  return { seconds: Number(process.hrtime.bigint() - t0) / 1e9, r };
}

const dir = mkdtempSync(join(tmpdir(), 'intradyne-csv-bench-'));
try {
  const path = join(dir, 'capture.csv');
  const rng = new Rng(7);
  const ch = () => {
    const a = new Float64Array(SAMPLES);
    rng.fillGaussian(a);
    return a;
  };
  writeCaptureCsv(path, { xi: ch(), xq: ch(), yi: ch(), yq: ch(), sampleRate: 64e9 });
  const bytes = statSync(path).size;
  console.log(`machine: ${cpus()[0]?.model ?? 'unknown CPU'}, Node ${process.version}`);
  console.log(`capture CSV: ${SAMPLES} rows × 4 channels, ${(bytes / 1e6).toFixed(1)} MB`);
  const records = [];
  const report = (label, fn) => {
    fn();
    const times = [];
    for (let r = 0; r < RUNS; r++) times.push(time(fn).seconds);
    records.push(record(label, { units: 'B', perRun: bytes, params: { rows: SAMPLES, MB: (bytes / 1e6).toFixed(1) } }, times));
  };
  // Same numbers both ways, bit for bit.
  const a = naive(path);
  let k = 0;
  for (const b of readCsvCapture(path, { sampleRate: 64e9 })) {
    for (let i = 0; i < b.xi.length; i++, k++) {
      if (!Object.is(b.xi[i], a[0][k]) || !Object.is(b.yq[i], a[3][k])) throw new Error(`row ${k}: the parsers disagree`);
    }
  }
  report('readCsvCapture (bytes, exact parser)', () => ours(path));
  // Memory while streaming: the read buffer (1 MiB) and one block (2 MiB)
  // whatever the file size; the naive parser holds the whole text and its lines.
  const base = process.memoryUsage().rss;
  let peak = base;
  let blocks = 0;
  for (const b of readCsvCapture(path, { sampleRate: 64e9 })) {
    if (++blocks % 4 === 0) peak = Math.max(peak, process.memoryUsage().rss);
    if (b.xi.length === 0) break;
  }
  console.log(`${'streaming: resident memory above the start'.padEnd(44)} ${((peak - base) / 1e6).toFixed(1).padStart(7)} MB`);
  report('naive (readFileSync, split, Number)', () => naive(path));
  saveSection('csv-parse', records, {
    notes: [`streaming: resident memory above the start ${((peak - base) / 1e6).toFixed(1)} MB`],
  });
} finally {
  rmSync(dir, { recursive: true, force: true });
}
