import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { expect } from 'vitest';
import { runScenario } from '../../src/scenarios/run.js';
import { runBuilt } from './run-cli.js';

/**
 * Three small simulated DP-QPSK captures in `dir` (a.csv, b.csv, c.csv with
 * their descriptors and references): 4096 symbols at 2 samples per symbol,
 * the least the analysis measures well after its 2048-symbol lead-in; each
 * analyses in well under a second. Capture a has no bit error at its
 * Es/N0 of 16 dB (its BER is an upper bound) and, without laser phase
 * noise, a linewidth estimate below zero (seed chosen for both, measured).
 * @returns the paths of the three data files
 */
export function tinyCaptures(dir: string): string[] {
  const written = runScenario(
    {
      name: 'tiny',
      description: 'three small captures for the fault and property suites',
      base: {
        symbolRate: 32e9,
        symbols: 4096,
        samplesPerSymbol: 2,
        rollOff: 0.1,
        modulation: 'qpsk',
        channel: { sop: 'random' },
      },
      captures: [
        { name: 'a', seed: 72, channel: { esN0Db: 16, sop: 'random' } },
        { name: 'b', seed: 73, channel: { esN0Db: 9, sop: 'random' } },
        { name: 'c', seed: 74, channel: { esN0Db: 11, sop: 'random', linewidthHz: 100e3 } },
      ],
    },
    dir,
  );
  return written.map((w) => join(dir, `${w.name}.csv`));
}

/** The tiny captures and the sweep of them that the fault and property suites compare against. */
export interface SweptCaptures {
  /** A fresh temporary folder holding the rest (the caller removes it). */
  readonly base: string;
  /** The folder of the three captures. */
  readonly captures: string;
  /** The output folder of a whole sweep of them: results.csv, results.arrow, journal.jsonl. */
  readonly referenceSweep: string;
}

/**
 * {@link tinyCaptures} in a new temporary folder, swept once with the built
 * command on one worker (so that the journal's lines come in the captures'
 * order: a, b, c).
 */
export async function sweptTinyCaptures(prefix: string): Promise<SweptCaptures> {
  const base = mkdtempSync(join(tmpdir(), prefix));
  const captures = join(base, 'captures');
  tinyCaptures(captures);
  const referenceSweep = join(base, 'reference-sweep');
  const r = await runBuilt(['sweep', captures, '--jobs', '1', '--out', referenceSweep]);
  expect(r.code, r.stderr).toBe(0);
  return { base, captures, referenceSweep };
}
