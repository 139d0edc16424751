// Analyses every capture of a folder (and its subfolders) with the default
// receiver and writes one table of results as Arrow, for Python, R or SQL
// tools, with a column of your own: here the launch power, read from the
// subfolder name of a launch-power sweep (`launch+2dBm/run-01.csv`).
//
//   node docs/examples/analyze-folder.mjs FOLDER [--out results.arrow] [--simulate]
//
// --simulate first writes a small launch-power sweep into FOLDER to try it
// on (DP-16QAM at 32 GBd; the Es/N0 of each power stands in for what the
// link did). `intradyne sweep` does the same analysis on worker threads and
// resumes; a script like this one is for adding your own columns or checks.
import { mkdirSync } from 'node:fs';
import { join, relative } from 'node:path';
import { parseArgs } from 'node:util';
import { simulate } from '@intradyne/core';
import { listCaptures, openCapture, writeCaptureCsv, writeJsonAtomic, writeReferenceCsv, writeResultsArrow } from '@intradyne/io';
import { analyzeCapture, fecVerdict } from '@intradyne/metrics';

const { values, positionals } = parseArgs({
  allowPositionals: true,
  options: {
    out: { type: 'string', default: 'results.arrow' },
    simulate: { type: 'boolean', default: false },
    symbols: { type: 'string', default: '32768' },
  },
});
const folder = positionals[0];
if (!folder) {
  console.error('usage: node analyze-folder.mjs FOLDER [--out results.arrow] [--simulate] [--symbols N]');
  process.exit(2);
}

if (values.simulate) {
  // Launch power against Es/N0 as a span might give it: noise-limited below
  // the optimum, nonlinearity-limited above (numbers of our own scenario).
  const sweep = [
    { dBm: -2, esN0Db: 15.5 },
    { dBm: 0, esN0Db: 17.0 },
    { dBm: 2, esN0Db: 17.6 },
    { dBm: 4, esN0Db: 16.4 },
  ];
  for (const [i, p] of sweep.entries()) {
    const dir = join(folder, `launch${p.dBm >= 0 ? '+' : ''}${p.dBm}dBm`);
    mkdirSync(dir, { recursive: true });
    const sim = simulate({
      seed: 100 + i,
      modulation: '16qam',
      symbols: Number(values.symbols),
      symbolRate: 32e9,
      samplesPerSymbol: 2,
      channel: { esN0Db: p.esN0Db, linewidthHz: 100e3, freqOffsetHz: 800e6, sop: 'random' },
    });
    writeCaptureCsv(join(dir, 'run-01.csv'), sim.channels, { overwrite: true });
    writeReferenceCsv(join(dir, 'run-01-reference.csv'), sim.reference, { overwrite: true });
    writeJsonAtomic(
      join(dir, 'run-01.json'),
      { sampleRate: 64e9, symbolRate: 32e9, modulation: '16qam', reference: 'run-01-reference.csv', dispersionPsPerNm: 0 },
      { overwrite: true },
    );
  }
}

const rows = [];
for (const path of listCaptures(folder)) {
  const capture = openCapture(path);
  const launch = /launch([+-]\d+(?:\.\d+)?)dBm/.exec(path);
  const result = analyzeCapture(
    capture.blocks(),
    {
      modulation: capture.modulation,
      symbolRate: capture.symbolRate,
      sampleRate: capture.sampleRate,
      rollOff: capture.rollOff,
      dispersionPsPerNm: capture.dispersionPsPerNm,
    },
    capture.reference,
  );
  const m = result.measurement;
  // Against 7 % hard-decision FEC (BER 3.8e-3): 'pass' or 'fail' only when the
  // whole 95 % interval of the BER lies on one side of the limit.
  const fec = m ? fecVerdict(m, 'hd-7') : null;
  rows.push({
    capture: relative(folder, path),
    launchPowerDbm: launch ? Number(launch[1]) : null,
    ok: result.ok,
    failure: result.failure?.reason ?? null,
    ber: m?.ber ?? null,
    berLow: m?.berCi95[0] ?? null,
    berHigh: m?.berCi95[1] ?? null,
    snrDb: m?.snrDb ?? null,
    gmi: m?.gmi ?? null,
    ngmi: m?.ngmi ?? null,
    hd7: fec?.verdict ?? null,
    hd7MarginDb: fec?.margin ?? null,
    freqOffsetHz: result.freqOffsetHz,
  });
}
if (rows.length === 0) {
  console.error(`${folder}: no capture found (a capture is a data file with a same-named .json beside it)`);
  process.exit(1);
}

rows.sort((a, b) => (a.launchPowerDbm ?? 0) - (b.launchPowerDbm ?? 0));
console.log('capture                     launch dBm  BER       SNR dB  GMI    7 % HD-FEC (Q margin)');
for (const r of rows) {
  console.log(
    [
      r.capture.padEnd(26),
      String(r.launchPowerDbm ?? '—').padStart(10),
      (r.ber === null ? '—' : r.ber.toExponential(2)).padStart(8),
      (r.snrDb === null ? '—' : r.snrDb.toFixed(2)).padStart(6),
      (r.gmi === null ? '—' : r.gmi.toFixed(3)).padStart(5),
      r.hd7 === null ? `failed: ${r.failure}` : `${r.hd7} (${r.hd7MarginDb?.toFixed(2)} dB)`,
    ].join('  '),
  );
}
writeResultsArrow(values.out, rows, { overwrite: true });
console.log(`wrote ${rows.length} rows to ${values.out}`);
