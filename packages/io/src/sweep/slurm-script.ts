/** What a Slurm job-array script for a sharded sweep needs. */
export interface SlurmScriptOptions {
  /** Array tasks, one shard each (N of `--shard K/N`), ≥ 1. */
  readonly tasks: number;
  /** CPUs per task; each shard runs that many worker threads. */
  readonly cpusPerTask: number;
  /** How to run the intradyne command: the program and its first arguments (e.g. node and main.js), absolute paths. */
  readonly command: readonly string[];
  /** The folder or manifest swept, as an absolute path. */
  readonly input: string;
  /** The results folder, as an absolute path. */
  readonly out: string;
  /** The analysis options every shard passes on (e.g. `['--skip', '1024']`). */
  readonly analysisArgs: readonly string[];
  /** Number of captures of the sweep when the script was written (for its header). */
  readonly captures: number;
  /** The merge's HTML report (`merge --report`), as an absolute path, when asked for. */
  readonly report?: string;
}

/** A word for bash, single-quoted unless it needs no quoting. */
export function shellQuote(word: string): string {
  return /^[A-Za-z0-9_./:=@%+-]+$/.test(word) ? word : `'${word.replaceAll("'", "'\\''")}'`;
}

/**
 * The text of a bash script that runs a sweep as a Slurm job array, for the
 * user to review and submit (nothing is submitted when it is written).
 *
 * Run with `bash FILE` on a login node, it submits itself as an array of
 * `tasks` tasks (`--array=0-(tasks−1)`, so a task's id is its shard), then
 * `intradyne merge OUT` as a job depending on the whole array with
 * `afterany`: the merge runs even when a shard failed and then fails
 * itself, naming the missing shard, instead of waiting forever on a
 * dependency that can never be met. Run by Slurm as array task K, it runs
 * `intradyne sweep INPUT --out OUT --shard K/N --jobs $SLURM_CPUS_PER_TASK`:
 * the shard count is written into the script rather than read from Slurm
 * (`--shard auto`), so that a partial re-submission (`sbatch --array=2,5
 * FILE`, after those tasks failed) still runs shards 2 and 5 of N, and
 * resumes them from their journals. With `report`, the merge also writes
 * the sweep's HTML report there. Logs go to `OUT/logs/`, which must
 * exist before Slurm starts a task (the submitting branch creates it).
 * @example writeFileAtomic('lab.slurm', (w) => w(slurmScript({ tasks: 8, cpusPerTask: 4, … })))
 */
export function slurmScript(o: SlurmScriptOptions): string {
  const q = shellQuote;
  const logs = `${o.out}/logs`;
  const analysis = o.analysisArgs.length > 0 ? ` ${o.analysisArgs.map(q).join(' ')}` : '';
  const mergeReport = o.report === undefined ? '' : ` --report ${q(o.report)}`;
  return `#!/usr/bin/env bash
# An Intradyne sweep as a Slurm job array, written by 'intradyne sweep --emit-slurm'.
# ${o.captures} captures of ${o.input}
# in ${o.tasks} shards (each array task runs one shard on ${o.cpusPerTask} CPU${o.cpusPerTask === 1 ? '' : 's'}), then the
# merge of the shards into ${o.out}.
#
# Review it first: add your partition, account, time and memory limits to the
# #SBATCH lines below. Then submit it from a login node with
#   bash THIS_FILE
# which submits the array, then the merge as a job that starts once every
# task has ended (afterany: a failed shard makes the merge fail and name it,
# rather than leave the merge waiting). 'sbatch THIS_FILE' submits the array
# alone; merge afterwards with the command in the submitting branch below.
# Task K runs shard K of ${o.tasks}: keep the array's ids 0 to ${o.tasks - 1}. To redo some
# shards (after a failure), 'sbatch --array=K1,K2 THIS_FILE' runs just those,
# skipping the captures they had finished, then merge again.
#
#SBATCH --job-name=intradyne-sweep
#SBATCH --array=0-${o.tasks - 1}
#SBATCH --cpus-per-task=${o.cpusPerTask}
#SBATCH --output=${logs}/shard-%A_%a.out
##SBATCH --partition=YOUR_PARTITION
##SBATCH --account=YOUR_ACCOUNT
##SBATCH --time=01:00:00
##SBATCH --mem-per-cpu=2G
set -euo pipefail

INTRADYNE=(${o.command.map(q).join(' ')})
INPUT=${q(o.input)}
OUT=${q(o.out)}

if [ -z "\${SLURM_ARRAY_TASK_ID:-}" ]; then
  # Submitting (not inside a task): the array, then the merge after it.
  mkdir -p "$OUT/logs"
  array=$(sbatch --parsable "$0")
  array=\${array%%;*}
  merge=$(sbatch --parsable --dependency="afterany:$array" --job-name=intradyne-merge \\
    --cpus-per-task=1 --output="$OUT/logs/merge-%j.out" \\
    --wrap="$(printf '%q ' "\${INTRADYNE[@]}" merge "$OUT"${mergeReport})")
  echo "submitted the shards as job $array and the merge as job \${merge%%;*}"
  exit 0
fi

# Inside array task K: shard K of ${o.tasks}.
exec "\${INTRADYNE[@]}" sweep "$INPUT" --out "$OUT" --shard "$SLURM_ARRAY_TASK_ID/${o.tasks}" --jobs "\${SLURM_CPUS_PER_TASK:-1}"${analysis}
`;
}
