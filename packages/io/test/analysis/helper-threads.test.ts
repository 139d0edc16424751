import { statSync } from 'node:fs';
import { join } from 'node:path';
import { simulate } from '@intradyne/core';
import { describe, expect, it } from 'vitest';
import { analyzeFile } from '../../src/analysis/analyze-file.js';
import { openCapture } from '../../src/capture/capture.js';
import { HELPER_THREAD_BYTES } from '../../src/threads/helper-threads.js';
import { writeCaptureCsv, writeJsonAtomic, writeReferenceCsv } from '../../src/write/csv.js';
import { tempDir } from '../support/temp.js';

// The parsing thread runs the built package (dist/load/parse-ahead-worker.js): the test command builds first.

function writeCapture(dir: string, symbols: number, seed: number): string {
  const sim = simulate({
    seed,
    modulation: '16qam',
    symbols,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    channel: { esN0Db: 16, sop: 'random', linewidthHz: 100e3, freqOffsetHz: 0.8e9, dispersionPsPerNm: 340 },
  });
  writeCaptureCsv(join(dir, 'capture.csv'), sim.channels);
  writeReferenceCsv(join(dir, 'reference.csv'), sim.reference);
  const descriptor = join(dir, 'capture.json');
  writeJsonAtomic(descriptor, { sampleRate: 80e9, symbolRate: 32e9, modulation: '16qam', reference: 'reference.csv' });
  return join(dir, 'capture.csv');
}

describe('helper threads of an analysis', () => {
  it('a capture read through the parsing thread gives the blocks read on this thread', () => {
    const path = writeCapture(tempDir(), 6000, 3);
    const capture = openCapture(path, {});
    const here = [...capture.blocks({ blockSize: 4000 })];
    const ahead = [...capture.blocks({ blockSize: 4000, parseAhead: true })];
    expect(ahead.map((b) => b.xi.length)).toEqual(here.map((b) => b.xi.length));
    for (const [i, b] of ahead.entries()) {
      expect(Array.from(b.yq)).toEqual(Array.from(here[i].yq));
      expect(b.sampleRate).toBe(here[i].sampleRate);
    }
  });

  it('a capture above the size for helper threads is analysed to the same figures with and without them', () => {
    // 170,000 symbols at 2.5 samples per symbol: a CSV of about 35 MB, above HELPER_THREAD_BYTES.
    const path = writeCapture(tempDir(), 170_000, 8);
    expect(statSync(path).size).toBeGreaterThan(HELPER_THREAD_BYTES);
    const threaded = analyzeFile(path).result;
    const alone = analyzeFile(path, { helperThreads: false }).result;
    expect(threaded.ok).toBe(true);
    expect(threaded.record.inputSha256).toBe(alone.record.inputSha256);
    expect(threaded.measurement).toEqual(alone.measurement);
    expect(threaded.record.samples).toBe(425_000);
  });
});
