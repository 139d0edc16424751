import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { expect } from 'vitest';
import { runMain } from './run-cli.js';

/**
 * Sixteen small simulated captures for the sharding tests, eight in each of
 * two subfolders (the keys then hold a '/'): QPSK and 16QAM over a range of
 * Es/N0, one with a frequency offset. 8192 symbols at 2 samples per symbol,
 * as in the sweep test: the analysis needs about 6000 symbols after its
 * 2048-symbol lead-in, and a capture analyses in well under a second.
 * @returns the folder holding the two subfolders
 */
export async function simulateSixteenCaptures(work: string): Promise<string> {
  const captures = join(work, 'captures');
  for (const [folder, first] of [
    ['osnr-a', 0],
    ['osnr-b', 8],
  ] as const) {
    const scenario = {
      name: `shard-test-${folder}`,
      base: { symbolRate: 32e9, symbols: 8192, samplesPerSymbol: 2, rollOff: 0.1, modulation: 'qpsk' },
      captures: Array.from({ length: 8 }, (_, i) => ({
        name: `run-${String(first + i).padStart(2, '0')}`,
        seed: 100 + first + i,
        ...(i % 4 === 3 ? { modulation: '16qam', channel: { esN0Db: 17 + i / 2 } } : { channel: { esN0Db: 9 + i } }),
        ...(first + i === 5 ? { channel: { esN0Db: 13, freqOffsetHz: 3e8 } } : {}),
      })),
    };
    mkdirSync(work, { recursive: true });
    const file = join(work, `${folder}.json`);
    writeFileSync(file, JSON.stringify(scenario));
    const r = await runMain(['simulate', file, '--out', join(captures, folder)]);
    expect(r.code, r.stderr).toBe(0);
  }
  return captures;
}
