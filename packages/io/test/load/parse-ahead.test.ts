import { appendFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { type ChannelBlock, simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors/input-error.js';
import { readCsvCapture, readCsvCaptureReusing } from '../../src/load/csv-capture.js';
import { MAX_AHEAD_BLOCK_ROWS, readCaptureCsvAhead } from '../../src/load/parse-ahead.js';
import { HELPER_THREAD_BYTES, worthHelperThreads } from '../../src/threads/helper-threads.js';
import { writeCaptureCsv } from '../../src/write/csv.js';
import { caught, tempDir } from '../support/temp.js';

// The parsing thread runs the built package (dist/load/parse-ahead-worker.js): the test command builds first.

/** 3,000 samples: with blocks of 97 rows, 31 blocks go round the ring of three slots ten times over. */
const sim = simulate({ seed: 11, modulation: '16qam', symbols: 1500, symbolRate: 32e9, channel: { esN0Db: 14 } });

const copyOf = (b: ChannelBlock) => ({
  xi: Array.from(b.xi),
  xq: Array.from(b.xq),
  yi: Array.from(b.yi),
  yq: Array.from(b.yq),
  sampleRate: b.sampleRate,
  samplesPerSymbol: b.samplesPerSymbol,
});

describe('parsing a CSV capture on a second thread', () => {
  it('yields the blocks of the reader on this thread, bit for bit and of the same sizes', () => {
    const path = join(tempDir(), 'c.csv');
    writeCaptureCsv(path, sim.channels);
    for (const options of [
      { sampleRate: 64e9, blockSize: 97 },
      { sampleRate: 64e9, blockSize: 4096, samplesPerSymbol: 2, bufferBytes: 8192 },
    ]) {
      const here = [...readCsvCapture(path, options)].map(copyOf);
      const ahead = [...readCaptureCsvAhead(path, options)].map(copyOf);
      expect(ahead.length).toBe(here.length);
      expect(ahead).toEqual(here);
    }
  });

  it('the reusing reader gives the same values when each block is copied before the next', () => {
    const path = join(tempDir(), 'c.csv');
    writeCaptureCsv(path, sim.channels);
    const here = [...readCsvCapture(path, { sampleRate: 64e9, blockSize: 100 })].map(copyOf);
    const reused: ReturnType<typeof copyOf>[] = [];
    for (const b of readCsvCaptureReusing(path, { sampleRate: 64e9, blockSize: 100 })) reused.push(copyOf(b));
    expect(reused).toEqual(here);
  });

  it('reports a malformed cell with its file, line and column, after the blocks before it', () => {
    const path = join(tempDir(), 'bad.csv');
    writeCaptureCsv(path, sim.channels);
    appendFileSync(path, '0.1,0.2,0.x3,0.4\n');
    // A small read buffer: the blocks before the bad row are released before the parser reaches it.
    const options = { sampleRate: 64e9, blockSize: 500, bufferBytes: 4096 };
    let blocksHere = 0;
    const expected = caught(() => {
      for (const _ of readCsvCapture(path, options)) blocksHere++;
    }) as InputError;
    expect(expected).toBeInstanceOf(InputError);
    let blocks = 0;
    const e = caught(() => {
      for (const _ of readCaptureCsvAhead(path, options)) blocks++;
    }) as InputError;
    expect(e).toBeInstanceOf(InputError);
    expect(e.message).toBe(expected.message);
    // Header on line 1, 3,000 good rows, the bad one on line 3002, its third cell at column 9.
    expect([e.file, e.line, e.column, e.what]).toEqual([path, 3002, 9, expected.what]);
    expect(blocks).toBe(blocksHere);
    expect(blocks).toBeGreaterThanOrEqual(5);
  });

  it('reports a missing file as the reader on this thread does', () => {
    const path = join(tempDir(), 'none.csv');
    const here = caught(() => [...readCsvCapture(path, { sampleRate: 64e9 })]) as InputError;
    const ahead = caught(() => [...readCaptureCsvAhead(path, { sampleRate: 64e9 })]) as InputError;
    expect(ahead).toBeInstanceOf(InputError);
    expect(ahead.message).toBe(here.message);
  });

  it('refuses bad options as the reader on this thread does, and reads very large blocks on this thread', () => {
    const path = join(tempDir(), 'c.csv');
    writeCaptureCsv(path, sim.channels);
    for (const blockSize of [0, 2.5, -4]) {
      const here = caught(() => [...readCsvCapture(path, { sampleRate: 64e9, blockSize })]);
      const ahead = caught(() => [...readCaptureCsvAhead(path, { sampleRate: 64e9, blockSize })]);
      expect(ahead).toBeInstanceOf(RangeError);
      expect((ahead as Error).message).toBe((here as Error).message);
    }
    const huge = [...readCaptureCsvAhead(path, { sampleRate: 64e9, blockSize: MAX_AHEAD_BLOCK_ROWS + 1 })];
    expect(huge.map(copyOf)).toEqual([...readCsvCapture(path, { sampleRate: 64e9 })].map(copyOf));
  });

  it('can be left early, and read again', () => {
    const path = join(tempDir(), 'c.csv');
    writeCaptureCsv(path, sim.channels);
    let seen = 0;
    for (const b of readCaptureCsvAhead(path, { sampleRate: 64e9, blockSize: 50 })) {
      seen += b.xi.length;
      if (seen >= 200) break;
    }
    expect(seen).toBe(200);
    const again = [...readCaptureCsvAhead(path, { sampleRate: 64e9, blockSize: 50 })];
    expect(again.reduce((n, b) => n + b.xi.length, 0)).toBe(3000);
  });

  it('helper threads are for files of HELPER_THREAD_BYTES and more', () => {
    const dir = tempDir();
    const small = join(dir, 'small.csv');
    writeFileSync(small, 'xi,xq,yi,yq\n0,0,0,0\n');
    expect(worthHelperThreads(small)).toBe(false);
    const large = join(dir, 'large.csv');
    writeFileSync(large, Buffer.alloc(HELPER_THREAD_BYTES, 0x20));
    expect(worthHelperThreads(large)).toBe(true);
    expect(worthHelperThreads(join(dir, 'missing.csv'))).toBe(false);
  });
});
