import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { type ComplexArray, complexArray, constellation, Rng, simulate } from '@intradyne/core';
import { compactReference } from '@intradyne/metrics';
import { describe, expect, it } from 'vitest';
import { checkReferenceConstellation, loadReferenceCsv, loadReferenceLabelsCsv } from '../../src/capture/reference.js';
import { InputError } from '../../src/errors/input-error.js';
import { writeReferenceCsv } from '../../src/write/csv.js';
import { caught, FIXTURES, tempDir } from '../support/temp.js';

function message(fn: () => unknown): string {
  const e = caught(fn);
  expect(e).toBeInstanceOf(InputError);
  return (e as Error).message;
}

describe('a reference loaded as labels', () => {
  it('holds the labels of the symbols loaded whole, for every fixture', () => {
    for (const [name, modulation] of [
      ['qpsk-clean-reference.csv', 'qpsk'],
      ['16qam-scope-reference.csv', '16qam'],
      ['64qam-time-column-reference.csv', '64qam'],
    ] as const) {
      const path = join(FIXTURES, name);
      const expected = compactReference(loadReferenceCsv(path), modulation);
      expect(loadReferenceLabelsCsv(path, modulation)).toEqual(expected);
    }
  });

  it('reads a file longer than it holds in memory again, with the same labels', () => {
    // 2^20 + 4,096 rows: past the rows kept between passes, so the second and third passes read the file.
    const n = 2 ** 20 + 4096;
    const rng = new Rng(77);
    const levels = [-3, -1, 1, 3];
    const x = complexArray(n);
    const y = complexArray(n);
    for (let i = 0; i < 2 * n; i++) {
      x[i] = 0.25 * levels[rng.integer(4)];
      y[i] = 0.25 * levels[rng.integer(4)];
    }
    const path = join(tempDir(), 'long-reference.csv');
    writeReferenceCsv(path, { x, y });
    const ref = loadReferenceLabelsCsv(path, '16qam');
    expect(ref.symbols).toBe(n);
    expect(ref).toEqual(compactReference({ x, y }, '16qam'));
  });

  it('names the first symbol off the constellation as checkReferenceConstellation does, x before y', () => {
    const sim = simulate({ seed: 78, modulation: '16qam', symbols: 200, symbolRate: 32e9 });
    const x = sim.reference.x.slice() as ComplexArray;
    const y = sim.reference.y.slice() as ComplexArray;
    y[2 * 10] *= 1.5; // y symbol 11 off first in the file …
    x[2 * 150 + 1] = 0.1; // … x symbol 151 off too: x is named, as the whole-array check names it
    const dir = tempDir();
    const path = join(dir, 'reference.csv');
    writeReferenceCsv(path, { x, y });
    expect(message(() => loadReferenceLabelsCsv(path, '16qam'))).toMatch(
      /reference symbol 151, polarization x: expected a point of the 16qam constellation/,
    );
    writeFileSync(path, `x_re,x_im,y_re,y_im\n1,1,0,0\n${'1,-1,0,0\n'.repeat(40)}`);
    expect(message(() => loadReferenceLabelsCsv(path, 'qpsk'))).toMatch(
      /reference polarization y: expected qpsk symbols, received all zeros/,
    );
  });

  it('reads references of the added formats, and names a point the constellation does not have', () => {
    const dir = tempDir();
    for (const modulation of ['8qam', '32qam', '128qam', '256qam', 'ps-64qam:entropy=4.5'] as const) {
      const sim = simulate({ seed: 79, modulation, symbols: 4000, symbolRate: 32e9 });
      const path = join(dir, `${modulation.replace(':', '-')}.csv`);
      // At another scale, as a transmitter's file gives it.
      const x = sim.reference.x.map((v) => 3 * v) as ComplexArray;
      const y = sim.reference.y.map((v) => 3 * v) as ComplexArray;
      writeReferenceCsv(path, { x, y });
      const labels = loadReferenceLabelsCsv(path, modulation);
      expect(labels).toEqual(compactReference(sim.reference, modulation));
      expect(checkReferenceConstellation({ x, y }, constellation(modulation), path)).toBeUndefined();
    }
    // 32QAM: a symbol in a corner of the 6 × 6 grid, which the cross leaves empty.
    const sim = simulate({ seed: 80, modulation: '32qam', symbols: 400, symbolRate: 32e9 });
    const x = sim.reference.x.slice() as ComplexArray;
    const corner = 5 * constellation('32qam').scale;
    x[2 * 20] = corner;
    x[2 * 20 + 1] = corner;
    expect(message(() => checkReferenceConstellation({ x, y: sim.reference.y }, constellation('32qam'), 'tx.csv'))).toMatch(
      /reference symbol 21, polarization x: expected a point of the 32qam constellation .*in a corner the cross leaves empty/,
    );
    // A shaped reference drawn with another prior (5.5 bits) on the points of the stated one (4.5 bits):
    // scaled to the stated prior's unit power, its symbols fall between the points.
    const stated = constellation('ps-64qam:entropy=4.5');
    const drawn = simulate({ seed: 81, modulation: 'ps-64qam:entropy=5.5', symbols: 20000, symbolRate: 32e9 });
    const labels = compactReference(drawn.reference, 'ps-64qam:entropy=5.5').labels;
    const onStated = (l: Uint8Array) => {
      const z = complexArray(l.length);
      for (let k = 0; k < l.length; k++) {
        z[2 * k] = stated.points[2 * l[k]];
        z[2 * k + 1] = stated.points[2 * l[k] + 1];
      }
      return z;
    };
    const path = join(dir, 'wrong-entropy.csv');
    writeReferenceCsv(path, { x: onStated(labels.x), y: onStated(labels.y) });
    expect(message(() => loadReferenceLabelsCsv(path, stated.name))).toMatch(
      /wrong-entropy.csv: reference symbol \d+, polarization x: expected a point of the ps-64qam:entropy=4.5 constellation/,
    );
  });
});
