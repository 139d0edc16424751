// Viterbi–Viterbi against blind phase search over a range of laser
// linewidths, on simulated DP-QPSK and DP-16QAM at 32 GBd: for each
// linewidth, the same capture goes through the default receiver twice, with
// one phase stage and then the other, and the SNR penalty against theory at
// the measured BER is compared.
//
//   node docs/examples/compare-phase-recovery.mjs [--symbols N] [--linewidths 100e3,1e6] [--modulations qpsk,16qam] [--out DIR]
//
// Prints a table and writes phase-recovery.csv and phase-recovery.svg (the
// penalty against the linewidth–symbol-period product) in --out (default the
// current folder). Each capture is simulated at the Es/N0 where theory gives
// BER 1e-3 (Cho & Yoon 2002), so that the penalty is read at one BER.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { blindPhaseSearch, simulate, viterbiViterbi } from '@intradyne/core';
import { analyzeCapture, snrForBer } from '@intradyne/metrics';

const { values } = parseArgs({
  options: {
    symbols: { type: 'string', default: '32768' },
    linewidths: { type: 'string', default: '50e3,200e3,500e3,1e6,2e6' },
    modulations: { type: 'string', default: 'qpsk,16qam' },
    out: { type: 'string', default: '.' },
  },
});
const symbols = Number(values.symbols);
const linewidths = values.linewidths.split(',').map(Number);
const modulations = values.modulations.split(',');
const symbolRate = 32e9;

const algorithms = {
  'viterbi-viterbi': (modulation) => viterbiViterbi({ modulation, halfWindow: 16 }),
  'blind-phase-search': (modulation) => blindPhaseSearch({ modulation, testPhases: 32, halfWindow: 16 }),
};

const rows = [];
for (const modulation of modulations) {
  const esN0Db = snrForBer(modulation, 1e-3);
  for (const linewidthHz of linewidths) {
    const sim = simulate({
      seed: 2024,
      modulation,
      symbols,
      symbolRate,
      channel: { esN0Db, linewidthHz, freqOffsetHz: 500e6, sop: 'random' },
    });
    const block = { domain: 'channels', samplesPerSymbol: 2, ...sim.channels };
    for (const [algorithm, make] of Object.entries(algorithms)) {
      const settings = { modulation, symbolRate, sampleRate: sim.channels.sampleRate, replace: { phase: make(modulation) } };
      const r = analyzeCapture([block], settings, sim.reference);
      rows.push({
        modulation,
        algorithm,
        linewidthHz,
        linewidthSymbolProduct: linewidthHz / symbolRate,
        ber: r.measurement?.ber ?? null,
        penaltyDb: r.implementationPenaltyDb,
        cycleSlips: r.ok ? r.cycleSlips.count : null,
        failure: r.failure?.reason ?? '',
      });
    }
  }
}

// The table.
const fmt = (v, digits) => (v === null || v === undefined ? '—' : v.toFixed(digits));
console.log('modulation  algorithm            linewidth   Δν·T      BER       penalty dB  slips');
for (const r of rows) {
  console.log(
    [
      r.modulation.padEnd(10),
      r.algorithm.padEnd(19),
      `${(r.linewidthHz / 1e3).toFixed(0)} kHz`.padStart(10),
      r.linewidthSymbolProduct.toExponential(1).padStart(8),
      (r.ber === null ? '—' : r.ber.toExponential(2)).padStart(9),
      fmt(r.penaltyDb, 2).padStart(11),
      String(r.cycleSlips ?? '—').padStart(6),
    ].join('  ') + (r.failure ? `  ${r.failure}` : ''),
  );
}

// The CSV, one row per run.
const header = Object.keys(rows[0]);
const quote = (v) => (typeof v === 'string' && /[",\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : String(v ?? ''));
writeFileSync(
  join(values.out, 'phase-recovery.csv'),
  `${[header.join(','), ...rows.map((r) => header.map((h) => quote(r[h])).join(','))].join('\n')}\n`,
);

// The plot: penalty (dB) against Δν·T on a log axis, one line per modulation and algorithm.
writeFileSync(join(values.out, 'phase-recovery.svg'), penaltyPlot(rows));
console.log(`wrote ${join(values.out, 'phase-recovery.csv')} and ${join(values.out, 'phase-recovery.svg')}`);

function penaltyPlot(data) {
  const W = 640;
  const H = 400;
  const left = 64;
  const right = 180;
  const top = 24;
  const bottom = 52;
  const points = data.filter((r) => r.penaltyDb !== null);
  const xs = points.map((r) => Math.log10(r.linewidthSymbolProduct));
  const ys = points.map((r) => r.penaltyDb);
  const x0 = Math.floor(Math.min(...xs));
  const x1 = Math.ceil(Math.max(...xs));
  const y0 = Math.min(0, Math.floor(Math.min(...ys) * 2) / 2);
  const y1 = Math.max(0.5, Math.ceil(Math.max(...ys) * 2) / 2);
  const px = (v) => left + ((v - x0) / (x1 - x0 || 1)) * (W - left - right);
  const py = (v) => H - bottom - ((v - y0) / (y1 - y0 || 1)) * (H - top - bottom);
  const colours = ['#1f5f8b', '#c2571a', '#3a7d44', '#7b3f8c'];
  const out = [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" font-family="sans-serif" font-size="12">`,
    `<rect width="${W}" height="${H}" fill="white"/>`,
    `<line x1="${left}" y1="${H - bottom}" x2="${W - right}" y2="${H - bottom}" stroke="black"/>`,
    `<line x1="${left}" y1="${top}" x2="${left}" y2="${H - bottom}" stroke="black"/>`,
  ];
  for (let d = x0; d <= x1; d++) {
    out.push(`<text x="${px(d)}" y="${H - bottom + 16}" text-anchor="middle">1e${d}</text>`);
  }
  for (let v = y0; v <= y1 + 1e-9; v += 0.5) {
    out.push(`<line x1="${left}" y1="${py(v)}" x2="${W - right}" y2="${py(v)}" stroke="#ddd"/>`);
    out.push(`<text x="${left - 6}" y="${py(v) + 4}" text-anchor="end">${v.toFixed(1)}</text>`);
  }
  out.push(`<text x="${(left + W - right) / 2}" y="${H - 12}" text-anchor="middle">linewidth × symbol period (Δν·T)</text>`);
  out.push(
    `<text transform="translate(16 ${(top + H - bottom) / 2}) rotate(-90)" text-anchor="middle">penalty at BER 1e-3, dB</text>`,
  );
  const series = [...new Set(points.map((r) => `${r.modulation} ${r.algorithm}`))];
  series.forEach((name, i) => {
    const line = points.filter((r) => `${r.modulation} ${r.algorithm}` === name);
    const path = line.map((r) => `${px(Math.log10(r.linewidthSymbolProduct)).toFixed(1)},${py(r.penaltyDb).toFixed(1)}`);
    const colour = colours[i % colours.length];
    out.push(`<polyline points="${path.join(' ')}" fill="none" stroke="${colour}" stroke-width="2"/>`);
    for (const p of path) out.push(`<circle cx="${p.split(',')[0]}" cy="${p.split(',')[1]}" r="3" fill="${colour}"/>`);
    out.push(`<text x="${W - right + 10}" y="${top + 16 + 18 * i}" fill="${colour}">${name}</text>`);
  });
  out.push('</svg>');
  return `${out.join('\n')}\n`;
}
