// What the report costs: the default receiver on a DP-16QAM capture file
// (2^17 symbols at 2.5 samples per symbol, CSV) without and with the report's
// plot data (constellation density and input spectra, gathered while
// streaming), then the time to write the analysis page and its size, and the
// sweep page of 200 rows. Part of `npx -y pnpm@12.4.2 bench`; run after a build.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { simulate } from '../packages/core/dist/index.js';
import {
  analysisReport,
  analysisToJson,
  analyzeFile,
  sweepReport,
  writeCaptureCsv,
  writeJsonAtomic,
  writeReferenceCsv,
} from '../packages/io/dist/index.js';
import { rowFromAnalysis } from '../packages/io/dist/sweep/result-row.js';
import { bench, machine, saveSection } from './harness.mjs';

const SYMBOLS = Number(process.env.REPORT_BENCH_SYMBOLS ?? 2 ** 17);
const m = machine();
console.log(`machine: ${m.cpu} (${m.cores} cores), Node ${m.node}`);
const dir = mkdtempSync(join(tmpdir(), 'intradyne-report-bench-'));
try {
  const cap = simulate({
    seed: 9,
    modulation: '16qam',
    symbols: SYMBOLS,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    channel: { esN0Db: 17, sop: 'random', dgdPs: 10, linewidthHz: 1e5, freqOffsetHz: 1e9, dispersionPsPerNm: 1360 },
  });
  const data = join(dir, 'capture.csv');
  writeCaptureCsv(data, cap.channels);
  writeReferenceCsv(join(dir, 'reference.csv'), cap.reference);
  writeJsonAtomic(join(dir, 'capture.json'), {
    sampleRate: 80e9,
    symbolRate: 32e9,
    modulation: '16qam',
    reference: 'reference.csv',
    dispersionPsPerNm: 1360,
  });
  const params = { symbols: SYMBOLS, modulation: '16qam', sps: 2.5, format: 'csv' };
  const records = [];
  records.push(bench('analyze a capture file', { units: 'symbols', perRun: SYMBOLS, params, runs: 3 }, () => analyzeFile(data)));
  records.push(
    bench('analyze a capture file with the plot data', { units: 'symbols', perRun: SYMBOLS, params, runs: 3 }, () =>
      analyzeFile(data, { analysis: { plotData: true } }),
    ),
  );
  const analysis = analyzeFile(data, { analysis: { plotData: true } });
  const kB = (html) => Math.round(Buffer.byteLength(html) / 1024);
  const pageKB = kB(analysisReport(analysis));
  records.push(
    bench(
      'write the analysis page',
      { units: 'pages', perRun: 1, params: { ...params, kB: pageKB }, runs: 5, scale: 1, prefix: '' },
      () => analysisReport(analysis),
    ),
  );
  // 200 rows: the same capture's row with its SNR stepped, as a long OSNR sweep would give.
  const row = rowFromAnalysis('capture.csv', analysisToJson(analysis), 'f'.repeat(64));
  const rows = Array.from({ length: 200 }, (_, i) => ({ ...row, capture: `run-${i}.csv`, snr_db: 12 + i * 0.05 }));
  const context = { source: 'bench', library: 'intradyne', version: 'bench' };
  const sweepKB = kB(sweepReport(rows, context));
  records.push(
    bench(
      'write the sweep page',
      { units: 'pages', perRun: 1, params: { rows: 200, kB: sweepKB }, runs: 5, scale: 1, prefix: '' },
      () => sweepReport(rows, context),
    ),
  );
  saveSection('report', records);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
