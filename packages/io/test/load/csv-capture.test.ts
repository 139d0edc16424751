import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { concatBlocks, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors/input-error.js';
import {
  loadCsvCapture,
  readCsvCapture,
  readCsvCaptureAsync,
  readCsvCaptureBytes,
  readCsvCaptureFiles,
} from '../../src/load/csv-capture.js';
import { writeCaptureCsv } from '../../src/write/csv.js';
import { caught, FIXTURES, tempDir } from '../support/temp.js';

const enc = new TextEncoder();
const bytes = (s: string) => enc.encode(s);
const load = (s: string, o = {}) => concatBlocks([...readCsvCaptureBytes(bytes(s), 'mem.csv', { sampleRate: 1e9, ...o })]);

/** A small simulated capture: 64 symbols at 2 samples per symbol is enough to exercise every path. */
const sim = simulate({ seed: 5, modulation: 'qpsk', symbols: 64, symbolRate: 32e9, channel: { esN0Db: 15 } });

function inputError(fn: () => unknown): InputError {
  const e = caught(fn);
  expect(e).toBeInstanceOf(InputError);
  return e as InputError;
}

describe('CSV capture loader', () => {
  it('reads back exactly what the writer wrote, whatever the block and buffer sizes', () => {
    const dir = tempDir();
    const path = join(dir, 'c.csv');
    writeCaptureCsv(path, sim.channels, { comments: ['a comment'] });
    const whole = loadCsvCapture(path, { sampleRate: 64e9 });
    // Shortest round-trip text (String(x)) read by an exact parser: bit-identical.
    expect(Array.from(whole.xi)).toEqual(Array.from(sim.channels.xi));
    expect(Array.from(whole.yq)).toEqual(Array.from(sim.channels.yq));
    expect(whole.sampleRate).toBe(64e9);
    for (const [blockSize, bufferBytes] of [
      [1, 128],
      [7, 100],
      [1000, 333],
    ]) {
      const blocks = [...readCsvCapture(path, { sampleRate: 64e9, blockSize, bufferBytes })];
      expect(blocks.every((b, i) => b.xi.length === blockSize || i === blocks.length - 1)).toBe(true);
      expect(Array.from(concatBlocks(blocks).xq)).toEqual(Array.from(sim.channels.xq));
    }
  });

  it('gives the same blocks asynchronously', async () => {
    const path = join(tempDir(), 'c.csv');
    writeCaptureCsv(path, sim.channels, { timeColumn: true });
    const blocks = [];
    for await (const b of readCsvCaptureAsync(path, { blockSize: 50, bufferBytes: 200 })) blocks.push(b);
    const sync = [...readCsvCapture(path, { blockSize: 50 })];
    expect(blocks.length).toBe(sync.length);
    expect(Array.from(concatBlocks(blocks).yi)).toEqual(Array.from(concatBlocks(sync).yi));
    expect(blocks[0].sampleRate).toBe(sync[0].sampleRate);
  });

  it('accepts names in any case and order, maps names, ignores other columns, takes CRLF and blank lines', () => {
    const b = load('# scope export\r\nIndex,YQ,Xi,extra,xQ,yi\r\n0,4,1,x,2,3\r\n\r\n1,8,5,y,6,7\r\n');
    expect([...b.xi, ...b.xq, ...b.yi, ...b.yq]).toEqual([1, 5, 2, 6, 3, 7, 4, 8]);
    const m = load('CH1;CH2;CH3;CH4\n1;2;3;4\n', { delimiter: ';', columns: { xi: 'ch4', xq: 'CH3', yi: 'ch2', yq: 'ch1' } });
    expect([m.xi[0], m.xq[0], m.yi[0], m.yq[0]]).toEqual([4, 3, 2, 1]);
    // A last line without a newline, spaces around cells.
    expect(load('xi,xq,yi,yq\n 1 , 2,3 ,4').yq[0]).toBe(4);
  });

  it('infers the sample rate from the time column of the 64qam-time-column fixture', () => {
    const b = loadCsvCapture(join(FIXTURES, '64qam-time-column.csv'));
    // The fixture's descriptor states 64 GSa/s; t = n/fs printed to 17 digits gives it to ~1e-15.
    expect(Math.abs(b.sampleRate / 64e9 - 1)).toBeLessThan(1e-12);
    expect(b.xi.length).toBe(16384);
    // A stated rate must agree with the time column (100 ppm).
    const e = inputError(() => loadCsvCapture(join(FIXTURES, '64qam-time-column.csv'), { sampleRate: 80e9 }));
    expect(e.message).toMatch(/64qam-time-column.csv:4: time column 't': expected the stated sample rate 80000000000 Sa\/s/);
  });

  it('refuses a time column with a dropped, repeated or out-of-order sample', () => {
    const rows = (ts: number[]) => `t,xi,xq,yi,yq\n${ts.map((t) => `${t},1,2,3,4`).join('\n')}\n`;
    expect(load(rows([0, 1e-9, 2e-9, 3e-9]), { sampleRate: undefined }).sampleRate).toBeCloseTo(1e9, 0);
    // 20 steps with one missing sample: the mean period is 1.05 ns, the gap is 2 ns.
    const gap = Array.from({ length: 21 }, (_, i) => (i < 10 ? i : i + 1) * 1e-9);
    const dropped = inputError(() => load(rows(gap), { sampleRate: undefined }));
    expect(dropped.line).toBe(12);
    expect(dropped.message).toMatch(/uniformly spaced time stamps/);
    const twice = Array.from({ length: 21 }, (_, i) => (i <= 5 ? i : i - 1) * 1e-9);
    const repeated = inputError(() => load(rows(twice), { sampleRate: undefined }));
    expect(repeated.line).toBe(8);
    const single = inputError(() => load(rows([0]), { sampleRate: undefined }));
    expect(single.message).toMatch(/at least two time stamps/);
    // Time stamps printed with 6 significant digits (a scope export): at
    // 3 µs the rounding is 0.5 % of a period, well inside the ±10 % step tolerance.
    const coarse = Array.from({ length: 3000 }, (_, i) => Number((i * 1e-9).toPrecision(6)));
    expect(Math.abs(load(rows(coarse), { sampleRate: undefined }).sampleRate / 1e9 - 1)).toBeLessThan(1e-6);
    // Beyond the first 1000 steps, checked as it streams.
    const long = Array.from({ length: 1500 }, (_, i) => i * 1e-9);
    long[1200] = long[1199];
    expect(inputError(() => load(rows(long), { sampleRate: undefined, blockSize: 100 })).line).toBe(1202);
  });

  it('reads one file per channel, in lockstep', () => {
    const dir = tempDir();
    const files = { xi: join(dir, 'a.csv'), xq: join(dir, 'b.csv'), yi: join(dir, 'c.csv'), yq: join(dir, 'd.csv') };
    const n = sim.channels.xi.length;
    const names = ['xi', 'xq', 'yi', 'yq'] as const;
    for (const c of names) {
      // Scope style: a time column and one amplitude column of any name.
      const lines = Array.from({ length: n }, (_, i) => `${i / 64e9},${sim.channels[c][i]}`);
      writeFileSync(files[c], `Time,Ampl\n${lines.join('\n')}\n`);
    }
    const b = concatBlocks([...readCsvCaptureFiles(files, { columns: { t: 'time' }, blockSize: 33 })]);
    for (const c of names) expect(Array.from(b[c])).toEqual(Array.from(sim.channels[c]));
    expect(Math.abs(b.sampleRate / 64e9 - 1)).toBeLessThan(1e-9);
    writeFileSync(files.yq, `Time,Ampl\n0,1\n${1 / 64e9},2\n`);
    expect(inputError(() => [...readCsvCaptureFiles(files, { columns: { t: 'time' }, blockSize: 33 })]).file).toBe(files.yq);
  });

  describe('bad input ends in an InputError naming file, line and column', () => {
    const cases: [string, string, number | undefined, number | undefined, RegExp][] = [
      ['missing column', 'xi,xq,yi\n1,2,3\n', 1, 1, /expected a column named 'yq'.*received the columns "xi", "xq", "yi"/],
      [
        'duplicate column',
        'xi,xq,yi,yq,XI\n1,2,3,4,5\n',
        1,
        13,
        /column 'XI' \(field 5\): expected one column named 'xi'.*first is field 1/,
      ],
      [
        'non-numeric cell',
        'xi,xq,yi,yq\n1,2,3,4\n1,abc,3,4\n',
        3,
        3,
        /column 'xq' \(field 2\): expected a finite decimal number, received "abc"/,
      ],
      ['NaN', 'xi,xq,yi,yq\n1,2,NaN,4\n', 2, 5, /received "NaN"/],
      ['Infinity', 'xi,xq,yi,yq\n1,2,3,-Infinity\n', 2, 7, /received "-Infinity"/],
      ['overflow', 'xi,xq,yi,yq\n1e999,2,3,4\n', 2, 1, /received "1e999"/],
      ['empty cell', 'xi,xq,yi,yq\n1,,3,4\n', 2, 3, /received an empty cell/],
      [
        'short row',
        'xi,xq,yi,yq\n1,2,3,4\n1,2,3\n',
        3,
        6,
        /row: expected 4 cells.*received 3 cells \(a short or truncated row\)/,
      ],
      ['long row', 'xi,xq,yi,yq\n1,2,3,4,5\n', 2, 9, /row: expected 4 cells.*received 5 cells/],
      ['truncated last row', 'xi,xq,yi,yq\n1,2,3,4\n5,6', 3, 4, /a short or truncated row/],
      ['empty file', '', undefined, undefined, /header: expected a header row naming the columns, received an empty file/],
      ['comments only', '# a\n# b\n', undefined, undefined, /received 2 line\(s\) of comments or blanks and no header/],
      ['header only', '# a\nxi,xq,yi,yq\n', 2, undefined, /data: expected at least one data row after the header, received none/],
    ];
    for (const [name, text, line, column, message] of cases) {
      it(name, () => {
        const e = inputError(() => load(text));
        expect(e.file).toBe('mem.csv');
        expect(e.line).toBe(line);
        expect(e.column).toBe(column);
        expect(e.message).toMatch(message);
      });
    }
    it('a missing file', () => {
      expect(inputError(() => loadCsvCapture('no/such/capture.csv', { sampleRate: 1 })).message).toBe(
        'no/such/capture.csv: capture: expected a readable file, received ENOENT (no such file or folder)',
      );
    });
    it('no time column and no stated rate', () => {
      expect(inputError(() => load('xi,xq,yi,yq\n1,2,3,4\n', { sampleRate: undefined })).message).toMatch(
        /mem.csv:1:1: sample rate: expected a time column 't'/,
      );
    });
  });
});
