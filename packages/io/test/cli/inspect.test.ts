import { copyFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { writeCaptureArrow, writeSymbolsArrow } from '../../src/arrow/arrow-write.js';
import { writeCaptureCsv, writeJsonAtomic } from '../../src/write/csv.js';
import { runMainSync } from '../support/run-cli.js';
import { FIXTURES, tempDir } from '../support/temp.js';

const run = runMainSync;

describe('intradyne inspect', () => {
  it('is listed and has help', () => {
    expect(run(['--help']).stdout).toMatch(/inspect/);
    const h = run(['inspect', '--help']);
    expect(h.code).toBe(0);
    expect(h.stdout).toMatch(/--sample-rate/);
  });

  it('reports statistics, spectrum and symbol rate of every fixture, as text and as JSON', () => {
    const before = readdirSync(FIXTURES).sort();
    for (const name of ['qpsk-clean', '16qam-scope', '64qam-time-column']) {
      const text = run(['inspect', join(FIXTURES, `${name}.csv`)]);
      expect(text.code).toBe(0);
      expect(text.stdout).toMatch(/symbol rate +\d+\.\d+ GBd estimated \(descriptor 32\.000 GBd/);
      const r = JSON.parse(run(['inspect', join(FIXTURES, `${name}.json`), '--json']).stdout);
      // Fixtures have 8192 symbols (16384–20480 samples): at 2048 symbols the
      // estimate spreads by about ±2 % (measured over seeds); 4 % is the bound.
      expect(Math.abs(r.symbolRate.estimateBd / 32e9 - 1)).toBeLessThan(0.04);
      expect(r.samples).toBe(name === '16qam-scope' ? 20480 : 16384);
      // The simulator's channels have zero mean and rms near 0.7 (unit power
      // split over I and Q); 16384 samples give a mean within ±0.05 (over 8σ).
      for (const c of ['xi', 'xq', 'yi', 'yq']) {
        expect(Math.abs(r.channels[c].mean)).toBeLessThan(0.05);
        expect(r.channels[c].rms).toBeGreaterThan(0.5);
        expect(r.channels[c].min).toBeLessThan(r.channels[c].max);
      }
      expect(r.spectrum.segments).toBeGreaterThan(8);
    }
    // Inspect reads only: the fixtures are untouched.
    expect(readdirSync(FIXTURES).sort()).toEqual(before);
  });

  it('finds the clipping of an overdriven 6-bit ADC and the 32 GBd rate of a simulated capture', () => {
    const dir = tempDir();
    // loading 0.45: full scale at 2.2 rms, so a few % of Gaussian-like samples clip.
    const sim = simulate({
      seed: 21,
      modulation: '16qam',
      symbols: 8192,
      symbolRate: 32e9,
      samplesPerSymbol: 2,
      channel: { esN0Db: 18, sop: 'random', freqOffsetHz: 1e9 },
      receiver: { adc: { bits: 6, loading: 0.45 } },
    });
    writeCaptureCsv(join(dir, 'hot.csv'), sim.channels);
    const r = JSON.parse(run(['inspect', join(dir, 'hot.csv'), '--sample-rate', '64e9', '--json']).stdout);
    for (const c of ['xi', 'xq', 'yi', 'yq'] as const) {
      // The simulator counts the samples it clipped; samples that merely land
      // in the top or bottom code also sit on the rail, so ours is at least its count.
      expect(r.channels[c].clipped).toBeGreaterThanOrEqual(sim.truth.clipped[c]);
      expect(r.channels[c].clipped).toBeLessThan(sim.truth.clipped[c] + 0.01);
      expect(sim.truth.clipped[c]).toBeGreaterThan(0.001);
    }
    // 8192 symbols: the spread is near ±1 % (see the core summary tests); 2 %.
    expect(Math.abs(r.symbolRate.estimateBd / 32e9 - 1)).toBeLessThan(0.02);
    expect(r.descriptor).toBeNull();
  });

  it('inspects an Arrow capture described by its schema metadata', () => {
    const dir = tempDir();
    const sim = simulate({ seed: 22, modulation: 'qpsk', symbols: 4096, symbolRate: 32e9, channel: { esN0Db: 14 } });
    writeSymbolsArrow(join(dir, 'tx.arrow'), sim.reference);
    writeCaptureArrow(join(dir, 'run.arrow'), sim.channels, {
      metadata: { symbolRate: '32e9', modulation: 'qpsk', reference: 'tx.arrow' },
    });
    const r = JSON.parse(run(['inspect', join(dir, 'run.arrow'), '--json']).stdout);
    expect(r.format).toBe('arrow');
    expect(r.samples).toBe(8192);
    // 4096 symbols: the same ±2 % spread as the fixtures; 4 %.
    expect(Math.abs(r.symbolRate.estimateBd / 32e9 - 1)).toBeLessThan(0.04);
  });

  it('exits 2 with a located message on bad input and bad usage', () => {
    const dir = tempDir();
    const bad = join(dir, 'bad.csv');
    writeFileSync(bad, 'xi,xq,yi,yq\n1,2,3,4\n1,2,oops,4\n');
    const r = run(['inspect', bad, '--sample-rate', '1e9']);
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(`${bad}:3:5: column 'yi' (field 3): expected a finite decimal number, received "oops"\n`);
    expect(run(['inspect', bad]).stderr).toMatch(/expected a time column 't'/);
    expect(run(['inspect']).code).toBe(2);
    expect(run(['inspect', join(dir, 'none.csv')]).stderr).toMatch(/none.csv: capture: expected an existing file/);
    expect(run(['inspect', bad, '--segment', '3']).code).toBe(2);
    // A descriptor with a wrong field stops the inspection too.
    for (const f of ['qpsk-clean.csv', 'qpsk-clean-reference.csv']) copyFileSync(join(FIXTURES, f), join(dir, f));
    writeJsonAtomic(join(dir, 'qpsk-clean.json'), {
      sampleRate: 64e9,
      symbolRate: 32e9,
      modulation: 'qpsk',
      reference: 'qpsk-clean-reference.csv',
      rollOff: 7,
    });
    const d = run(['inspect', join(dir, 'qpsk-clean.csv')]);
    expect(d.code).toBe(2);
    expect(d.stderr).toMatch(/qpsk-clean.json:6:14: field 'rollOff': expected a roll-off in \(0, 1\], received 7/);
  });
});
