import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { UsageError } from '../../src/cli/errors.js';
import { parseShard, shardFromSlurm } from '../../src/cli/shard-option.js';
import { inShard, shardFolderName, shardOf } from '../../src/sweep/shard.js';
import { caught } from '../support/temp.js';

/** The partition's definition, computed with Node's SHA-256 (OpenSSL), independent of core's. */
const expectedShard = (key: string, count: number) =>
  Number(BigInt(`0x${createHash('sha256').update(key, 'utf8').digest('hex').slice(0, 16)}`) % BigInt(count));

/** 1,000 keys shaped like a campaign's: folders per fibre length, captures per launch power. */
const KEYS = Array.from({ length: 1000 }, (_, i) => `reach-${(i % 25) * 40}km/launch-${Math.floor(i / 25) - 20}dBm.csv`);

describe('shardOf', () => {
  it('follows its definition: first 8 bytes of the SHA-256 of the key, big-endian, modulo N', () => {
    for (const count of [1, 2, 3, 4, 7, 16, 1000])
      for (const key of KEYS) expect(shardOf(key, count)).toBe(expectedShard(key, count));
  });

  it('keeps a fixed assignment (the leading 16 hex digits from coreutils sha256sum of each key)', () => {
    // printf '%s' KEY | sha256sum: dfd69537e982d2af…, ff9673d4827d2c82…, 8239687efa9e9408…,
    // d339db3de02597c4…, 1ea1bc33b7da8b4a…; the residues below are those numbers modulo N.
    const fixed: [string, Record<number, number>][] = [
      ['run-1/osnr-a.csv', { 2: 1, 4: 3, 7: 3, 16: 15, 1000: 959 }],
      ['osnr-c.csv', { 2: 0, 4: 2, 7: 1, 16: 2, 1000: 546 }],
      ['launch-power/p+2dBm.arrow', { 2: 0, 4: 0, 7: 5, 16: 8, 1000: 656 }],
      ['reach/080km/capture 7.csv', { 2: 0, 4: 0, 7: 0, 16: 4, 1000: 956 }],
      ['ü/été.csv', { 2: 0, 4: 2, 7: 3, 16: 10, 1000: 714 }],
    ];
    for (const [key, byCount] of fixed)
      for (const [count, shard] of Object.entries(byCount)) expect(shardOf(key, Number(count)), `${key} in ${count}`).toBe(shard);
  });

  it('balances 1,000 keys within 4 binomial standard deviations per shard', () => {
    // Each key lands in a given shard with probability 1/N independently (SHA-256 output
    // taken as uniform), so a shard's count is Binomial(1000, 1/N): mean 1000/N,
    // σ = √(1000·(1/N)·(1 − 1/N)) — 13.7 for N = 4, 9.1 for N = 16. Four σ leaves a
    // chance below 1e-4 per shard of a false alarm for a fixed key set.
    for (const count of [2, 4, 7, 16]) {
      const counts = new Array<number>(count).fill(0);
      for (const key of KEYS) counts[shardOf(key, count)]++;
      const sigma = Math.sqrt(1000 * (1 / count) * (1 - 1 / count));
      for (const c of counts) expect(Math.abs(c - 1000 / count), `N = ${count}: ${counts}`).toBeLessThan(4 * sigma);
    }
  });

  it('splits a list into disjoint shards that together hold every item once, each in its order', () => {
    const items = KEYS.map((key, i) => ({ key, i }));
    const shards = [0, 1, 2, 3, 4].map((index) => inShard(items, { index, count: 5 }));
    expect(shards.flat().length).toBe(1000);
    expect(new Set(shards.flat().map((s) => s.i)).size).toBe(1000);
    for (const s of shards) expect(s.map((x) => x.i)).toEqual([...s.map((x) => x.i)].sort((a, b) => a - b));
    expect(shardFolderName({ index: 2, count: 5 })).toBe('shard-2-of-5');
  });
});

describe('--shard K/N', () => {
  it('reads K/N with shards numbered from 0', () => {
    expect(parseShard('0/4', {})).toEqual({ index: 0, count: 4 });
    expect(parseShard('3/4', {})).toEqual({ index: 3, count: 4 });
    expect(parseShard('0/1', {})).toEqual({ index: 0, count: 1 });
  });

  it('refuses what is not K/N with 0 ≤ K < N, naming the value', () => {
    for (const bad of ['4/4', '5/4', '1/0', '0/0']) {
      const e = caught(() => parseShard(bad, {}));
      expect(e).toBeInstanceOf(UsageError);
      expect(e.message).toContain(`--shard expected K/N with 0 ≤ K < N (shards numbered from 0), received '${bad}'`);
    }
    for (const bad of ['1', '-1/4', '1.5/4', '1/4/5', ' 1/4', 'a/b', '01/4', '1/', '/4', 'AUTO']) {
      const e = caught(() => parseShard(bad, {}));
      expect(e).toBeInstanceOf(UsageError);
      expect(e.message).toContain(`--shard expected K/N (whole numbers, shards numbered from 0) or 'auto', received '${bad}'`);
    }
  });
});

describe('--shard auto', () => {
  const task = (id: number, min: number, max: number, count: number, step?: number) => ({
    SLURM_ARRAY_TASK_ID: String(id),
    SLURM_ARRAY_TASK_MIN: String(min),
    SLURM_ARRAY_TASK_MAX: String(max),
    SLURM_ARRAY_TASK_COUNT: String(count),
    ...(step !== undefined ? { SLURM_ARRAY_TASK_STEP: String(step) } : {}),
  });

  it('gives the task its rank in the array range, whatever the range starts at', () => {
    // --array=0-3, --array=1-4, --array=10-40:10 and a % limit (which changes no variable).
    expect(shardFromSlurm(task(2, 0, 3, 4, 1))).toEqual({ index: 2, count: 4 });
    expect(shardFromSlurm(task(1, 1, 4, 4, 1))).toEqual({ index: 0, count: 4 });
    expect(shardFromSlurm(task(4, 1, 4, 4))).toEqual({ index: 3, count: 4 });
    expect(shardFromSlurm(task(30, 10, 40, 4, 10))).toEqual({ index: 2, count: 4 });
    expect(parseShard('auto', task(0, 0, 0, 1))).toEqual({ index: 0, count: 1 });
  });

  it('refuses missing or inconsistent variables with a message listing them', () => {
    const cases: [Record<string, string>, string][] = [
      [{}, 'SLURM_ARRAY_TASK_ID is not set'],
      [{ SLURM_ARRAY_TASK_ID: '3' }, 'SLURM_ARRAY_TASK_COUNT is not set'],
      [{ SLURM_ARRAY_TASK_ID: '3', SLURM_ARRAY_TASK_COUNT: '4' }, 'SLURM_ARRAY_TASK_MIN is not set'],
      [{ ...task(2, 0, 3, 4), SLURM_ARRAY_TASK_ID: 'two' }, 'SLURM_ARRAY_TASK_ID is not a whole number'],
      // --array=1,5,9: MIN 1, MAX 9, COUNT 3, no step making 1 + 2·step = 9 with step 1.
      [task(5, 1, 9, 3, 1), 'not an evenly stepped range'],
      [task(7, 0, 3, 4, 1), 'the task id is not one of the range'],
      [task(5, 4, 10, 4, 2), 'the task id is not one of the range'],
      [task(0, 0, 0, 0, 1), 'the task count and step must be at least 1'],
    ];
    for (const [env, what] of cases) {
      const e = caught(() => parseShard('auto', env));
      expect(e).toBeInstanceOf(UsageError);
      expect(e.message).toContain('--shard auto expected to run as a task of a Slurm job array, but');
      expect(e.message).toContain(what);
      expect(e.message).toContain(`SLURM_ARRAY_TASK_ID=${env.SLURM_ARRAY_TASK_ID ?? '(unset)'}`);
    }
  });
});
