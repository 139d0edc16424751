// The runnable examples of docs/examples/, run on tiny sizes against the
// built packages (the test command builds first).
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { ROOT, runFile } from './guide-samples.js';

const EXAMPLES = join(ROOT, 'docs/examples');
// apache-arrow is a dependency of @intradyne/io, not of the workspace root.
const arrow = createRequire(join(ROOT, 'packages/io/package.json'))('apache-arrow') as {
  tableFromIPC(bytes: Uint8Array): { readonly numRows: number; getChild(name: string): Iterable<unknown> | null };
};

const work = mkdtempSync(join(tmpdir(), 'intradyne-examples-'));
afterAll(() => rmSync(work, { recursive: true, force: true }));

describe('docs/examples', () => {
  it('compare-phase-recovery.mjs prints the table and writes the CSV and the SVG plot', () => {
    const r = runFile(join(EXAMPLES, 'compare-phase-recovery.mjs'), work, [
      '--symbols',
      '8192',
      '--linewidths',
      '100e3,1e6',
      '--modulations',
      'qpsk',
      '--out',
      work,
    ]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/^qpsk\s+viterbi-viterbi\s+100 kHz/m);
    expect(r.stdout).toMatch(/^qpsk\s+blind-phase-search\s+1000 kHz/m);
    const csv = readFileSync(join(work, 'phase-recovery.csv'), 'utf8').trim().split('\n');
    expect(csv[0]).toBe('modulation,algorithm,linewidthHz,linewidthSymbolProduct,ber,penaltyDb,cycleSlips,failure');
    expect(csv).toHaveLength(1 + 2 * 2);
    for (const line of csv.slice(1)) {
      const penalty = Number(line.split(',')[5]);
      // Each capture sits at the Es/N0 of BER 1e-3 (Cho & Yoon 2002); with about
      // 12,000 bits measured, ~12 errors, the BER is known to ±60 % (Poisson,
      // 2σ), about ±0.5 dB of SNR, on top of the receiver's 0.1–0.3 dB
      // penalty (README): 1.5 dB bounds a working receiver, a broken phase
      // stage (slips, a wrong window) lands far above.
      expect(Math.abs(penalty), line).toBeLessThan(1.5);
    }
    const svg = readFileSync(join(work, 'phase-recovery.svg'), 'utf8');
    expect(svg).toMatch(/^<svg /);
    expect(svg.match(/<polyline /g)).toHaveLength(2); // one line per algorithm
  });

  it('analyze-folder.mjs analyses a simulated launch-power sweep into an Arrow table', () => {
    const r = runFile(join(EXAMPLES, 'analyze-folder.mjs'), work, [
      join(work, 'lab'),
      '--simulate',
      '--symbols',
      '8192',
      '--out',
      join(work, 'results.arrow'),
    ]);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/wrote 4 rows to /);
    const table = arrow.tableFromIPC(readFileSync(join(work, 'results.arrow')));
    expect(table.numRows).toBe(4);
    const launch = [...table.getChild('launchPowerDbm')!].map(Number);
    expect(launch).toEqual([-2, 0, 2, 4]);
    // The Es/N0 the example simulates for each launch power.
    const esN0Db = [15.5, 17.0, 17.6, 16.4];
    const snr = [...table.getChild('snrDb')!].map(Number);
    snr.forEach((s, i) => {
      // Data-aided SNR against the simulator's Es/N0 (defined at the same
      // point, see simulate): the receiver's 16QAM penalty is 0.1–0.3 dB
      // (README) and the estimate over ~6,000 symbols scatters by ~0.05 dB.
      expect(s, `launch ${launch[i]} dBm`).toBeGreaterThan(esN0Db[i] - 0.5);
      expect(s, `launch ${launch[i]} dBm`).toBeLessThan(esN0Db[i] + 0.1);
    });
  });
});
