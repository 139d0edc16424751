import { concatBlocks } from '@intradyne/core';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseDescriptor } from '../../src/capture/descriptor.js';
import { InputError } from '../../src/errors/input-error.js';
import { readCsvCaptureBytes } from '../../src/load/csv-capture.js';

const enc = new TextEncoder();

/** Loads or returns the error; anything thrown that is not an InputError fails the property. */
function attempt<T>(fn: () => T): { value: T } | { error: InputError } {
  try {
    return { value: fn() };
  } catch (e) {
    if (e instanceof InputError) return { error: e };
    throw e;
  }
}

const finite = fc.double({ noNaN: true, noDefaultInfinity: true });
const cellText = fc.oneof(
  finite.map(String),
  finite.map((v) => v.toExponential(6)),
  fc.integer({ min: -128, max: 127 }).map(String),
);

describe('fuzzing the loaders', () => {
  // Valid captures with random shapes load exactly; random damage to them
  // ends in an InputError with a position, never another exception or a
  // hang. 3000 + 5000 + 4000 cases keep the run to a few seconds.
  it('loads every well-formed capture exactly, whatever the layout and chunking', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(cellText, cellText, cellText, cellText), { minLength: 1, maxLength: 40 }),
        fc.shuffledSubarray(['xi', 'xq', 'yi', 'yq', 'extra'], { minLength: 5, maxLength: 5 }),
        fc.boolean(),
        fc.integer({ min: 1, max: 9 }),
        fc.integer({ min: 128, max: 400 }),
        fc.array(
          fc.string({ maxLength: 10 }).map((s) => `#${s.replace(/[\r\n]/g, '')}`),
          { maxLength: 3 },
        ),
        (rows, order, crlf, blockSize, bufferBytes, comments) => {
          const eol = crlf ? '\r\n' : '\n';
          const header = order.map((c, i) => (i % 2 ? c.toUpperCase() : c));
          const text = [
            ...comments,
            header.join(','),
            ...rows.map((r) => order.map((c) => (c === 'extra' ? 'junk' : r[['xi', 'xq', 'yi', 'yq'].indexOf(c)])).join(',')),
          ].join(eol);
          const b = concatBlocks([
            ...readCsvCaptureBytes(enc.encode(text), 'f.csv', { sampleRate: 1e9, blockSize, bufferBytes }),
          ]);
          expect(b.xi.length).toBe(rows.length);
          rows.forEach((r, i) => {
            expect(Object.is(b.xi[i], Number(r[0])) && Object.is(b.yq[i], Number(r[3]))).toBe(true);
          });
        },
      ),
      { numRuns: 3000 },
    );
  });

  it('ends every damaged capture in a typed error or a correct load', () => {
    const damage = fc.oneof(
      fc.constantFrom(
        '',
        ',',
        ',,',
        'NaN',
        'Infinity',
        '-',
        'e',
        '1e',
        '"1"',
        ' ',
        '\n',
        '\r',
        '#',
        'x',
        '1.2.3',
        '0x1',
        '1e999',
        '\u00e9',
      ),
      fc.string({ maxLength: 6 }),
    );
    fc.assert(
      fc.property(
        fc.array(fc.tuple(cellText, cellText, cellText, cellText), { minLength: 0, maxLength: 20 }),
        fc.array(fc.tuple(fc.nat(), damage), { minLength: 1, maxLength: 4 }),
        fc.integer({ min: 1, max: 5 }),
        (rows, edits, blockSize) => {
          let text = `xi,xq,yi,yq\n${rows.map((r) => r.join(',')).join('\n')}\n`;
          for (const [at, what] of edits) {
            const p = at % (text.length + 1);
            text = text.slice(0, p) + what + text.slice(p + (at % 3));
          }
          const r = attempt(() =>
            concatBlocks([...readCsvCaptureBytes(enc.encode(text), 'f.csv', { sampleRate: 1e9, blockSize, bufferBytes: 256 })]),
          );
          if ('error' in r) {
            expect(r.error.file).toBe('f.csv');
            expect(r.error.message.startsWith('f.csv')).toBe(true);
          } else {
            for (const c of ['xi', 'xq', 'yi', 'yq'] as const) expect(r.value[c].every(Number.isFinite)).toBe(true);
          }
        },
      ),
      { numRuns: 5000 },
    );
  });

  it('ends every descriptor in a typed error or a valid description', () => {
    const value = fc.oneof(
      fc.double(),
      fc.string({ maxLength: 8 }),
      fc.constantFrom('qpsk', '16QAM', '64qam', 'r.csv', 0.1, 1, 32e9, 80e9, null, true),
      fc.array(fc.integer(), { maxLength: 2 }),
    );
    const field = fc.constantFrom(
      'sampleRate',
      'symbolRate',
      'modulation',
      'reference',
      'rollOff',
      'dispersionPsPerNm',
      'columns',
      'notes',
      'simulation',
      'other',
    );
    const doc = fc.oneof(
      fc.dictionary(field, value, { maxKeys: 9 }).map((o) => JSON.stringify(o, null, 1)),
      fc.string({ maxLength: 40 }),
      fc.dictionary(field, value).map((o) => JSON.stringify(o).slice(0, -1)),
    );
    fc.assert(
      fc.property(doc, (text) => {
        const r = attempt(() => parseDescriptor(text, 'd.json'));
        if ('error' in r) expect(r.error.message.startsWith('d.json')).toBe(true);
        else {
          expect(r.value.symbolRate).toBeGreaterThan(0);
          expect(['qpsk', '16qam', '64qam']).toContain(r.value.modulation);
          expect(r.value.rollOff > 0 && r.value.rollOff <= 1).toBe(true);
        }
      }),
      { numRuns: 4000 },
    );
  });
});
