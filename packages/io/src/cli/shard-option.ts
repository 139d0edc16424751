import type { ShardSpec } from '../sweep/shard.js';
import { UsageError } from './errors.js';

const WHOLE = /^(0|[1-9][0-9]*)$/;

/**
 * Parses `--shard K/N` (0 ≤ K < N) or `--shard auto` (from the Slurm array
 * variables, see {@link shardFromSlurm}).
 * @throws UsageError naming what was expected and what was received
 */
export function parseShard(text: string, env: Readonly<Record<string, string | undefined>>): ShardSpec {
  if (text === 'auto') return shardFromSlurm(env);
  const m = /^([^/]*)\/([^/]*)$/.exec(text);
  if (!m || !WHOLE.test(m[1]) || !WHOLE.test(m[2]))
    throw new UsageError(
      `intradyne sweep: --shard expected K/N (whole numbers, shards numbered from 0) or 'auto', received '${text}'`,
    );
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (count < 1 || index >= count || !Number.isSafeInteger(count))
    throw new UsageError(`intradyne sweep: --shard expected K/N with 0 ≤ K < N (shards numbered from 0), received '${text}'`);
  return { index, count };
}

/**
 * The shard of a Slurm array task. Slurm numbers a task by the array range
 * the user wrote (`--array=0-3`, `--array=1-4`, `--array=10-40:10`), so the
 * shard is the task's rank in that range:
 * K = (SLURM_ARRAY_TASK_ID − SLURM_ARRAY_TASK_MIN) / SLURM_ARRAY_TASK_STEP,
 * N = SLURM_ARRAY_TASK_COUNT. The range must be arithmetic (a start, an end
 * and a step, with any `%` limit); a list such as `--array=1,5,9` is refused
 * unless it is one.
 * @throws UsageError when a variable is missing, not a whole number, or the
 *   variables disagree (the message lists them)
 */
export function shardFromSlurm(env: Readonly<Record<string, string | undefined>>): ShardSpec {
  const names = [
    'SLURM_ARRAY_TASK_ID',
    'SLURM_ARRAY_TASK_COUNT',
    'SLURM_ARRAY_TASK_MIN',
    'SLURM_ARRAY_TASK_MAX',
    'SLURM_ARRAY_TASK_STEP',
  ] as const;
  const seen = names.map((n) => `${n}=${env[n] ?? '(unset)'}`).join(', ');
  const problem = (what: string) =>
    new UsageError(`intradyne sweep: --shard auto expected to run as a task of a Slurm job array, but ${what} (${seen})`);
  const read = (name: (typeof names)[number], fallback?: number): number => {
    const v = env[name];
    if (v === undefined || v === '') {
      if (fallback !== undefined) return fallback;
      throw problem(`${name} is not set`);
    }
    if (!WHOLE.test(v)) throw problem(`${name} is not a whole number`);
    return Number(v);
  };
  const id = read('SLURM_ARRAY_TASK_ID');
  const count = read('SLURM_ARRAY_TASK_COUNT');
  const min = read('SLURM_ARRAY_TASK_MIN');
  const step = read('SLURM_ARRAY_TASK_STEP', 1);
  const max = read('SLURM_ARRAY_TASK_MAX', min + (count - 1) * step);
  if (count < 1 || step < 1) throw problem('the task count and step must be at least 1');
  if (max !== min + (count - 1) * step)
    throw problem('the array is not an evenly stepped range (MAX ≠ MIN + (COUNT − 1)·STEP); write --array=START-END[:STEP]');
  if (id < min || id > max || (id - min) % step !== 0) throw problem('the task id is not one of the range');
  return { index: (id - min) / step, count };
}
