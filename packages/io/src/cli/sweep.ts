import { existsSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { LIMITS } from '../capture/limits.js';
import { ProgressBar } from '../sweep/progress.js';
import type { SweepRow } from '../sweep/result-row.js';
import { checkSweepOut, defaultSweepOut, runSweep } from '../sweep/run-sweep.js';
import { inShard, shardLabel } from '../sweep/shard.js';
import { slurmScript } from '../sweep/slurm-script.js';
import { type SweepInputs, sweepInputs } from '../sweep/sweep-inputs.js';
import { prepareOutputFolder, writeFileAtomic } from '../write/atomic.js';
import { ANALYSIS_OPTIONS, analysisSettingsFrom } from './analyze.js';
import { parseCommandArgs, positiveInteger } from './args.js';
import { EXIT, UsageError } from './errors.js';
import { parseShard } from './shard-option.js';

export const SWEEP_HELP = `intradyne sweep DIR_OR_MANIFEST [options]

Analyses many captures with the default receiver, in parallel on worker
threads, and writes one results table: results.csv and results.arrow (Arrow
IPC file), one row per capture (its path relative to the sweep root,
modulation, ok, failure check and reason, BER and its 95 % interval, bit
errors, bits, SER, EVM, SNR, Q, GMI, NGMI, MI, frequency offset, cycle
slips, implementation penalty, per-polarization BER, SNR and GMI, and the
input, samples and pipeline SHA-256).

DIR_OR_MANIFEST is a folder (every capture in it and its subfolders: a data
file with a same-named .json beside it, in sorted order) or a manifest: a
text file with one capture path per line (data file or descriptor, relative
to the manifest's folder), blank lines and lines starting with '#' ignored,
swept in the order listed.

Resumable: each finished capture's row is appended to journal.jsonl in the
output folder with the SHA-256 of the capture's files (data, descriptor,
reference) and of the analysis settings; a re-run skips every capture whose
files and settings are unchanged, analyses the others, and rebuilds the
table from the journal. A journal line that is not a valid row (torn by a
kill, edited by hand) is moved to journal-set-aside.jsonl with a notice, and
its capture analysed again. A capture that cannot be read is a row with
check 'input' and does not stop the sweep.

One sweep at a time per output folder: the run holds the folder's lock file
(sweep.lock, with its process id and host); a second sweep or merge into it
is refused, and a lock left by a process of this machine that is no longer
running is taken over (with a notice).

Split over processes or machines (see docs/cluster.md):
  --shard K/N           analyse only shard K of N (0 ≤ K < N): the captures whose
                        key (path relative to the sweep root) has a SHA-256 equal
                        to K modulo N, the same on every machine; writes
                        DIR/shard-K-of-N/ (its own journal, table and shard.json);
                        'intradyne merge DIR' then makes the whole table
  --shard auto          K and N of this Slurm array task: K = (SLURM_ARRAY_TASK_ID
                        − SLURM_ARRAY_TASK_MIN) / SLURM_ARRAY_TASK_STEP,
                        N = SLURM_ARRAY_TASK_COUNT (an evenly stepped --array range)
  --emit-slurm FILE     write a Slurm job-array script for this sweep to FILE
                        (never replacing a file) and stop: nothing is analysed
                        or submitted; review it, then 'bash FILE' submits it
  --tasks N             with --emit-slurm: array tasks (shards); --jobs then
                        sets the CPUs per task (default 1)

Options:
  --jobs N              worker threads, at most ${LIMITS.maxJobs} (default: the number of CPUs, ${availableParallelism()} here)
  --out DIR             output folder (default: <input>-sweep beside the input;
                        never the swept folder or inside it)
  --report FILE         also write a self-contained HTML report of the table there
                        (BER and GMI/NGMI against SNR with theory and FEC limits;
                        with --shard, of the shard's rows; with --emit-slurm, the
                        merge job writes it)
  --json                print the summary and the rows as one JSON object
  and every analysis option of 'intradyne analyze' (applied to every capture):
  --modulation M, --symbol-rate BD, --sample-rate SAS, --roll-off B,
  --dispersion PSNM, --no-blind-dispersion, --skip N, --phase-recovery NAME,
  --equalizer-rule NAME, --orthogonalization NAME, --data-aided, --pipeline FILE
  -h, --help            this text

The progress bar and its ETA go to stderr; the summary to stdout.
Exit codes: 0 every capture analysed (or the script written), 1 some analysis
failed or some capture could not be read (see the table), 2 bad usage or input.
`;

export async function sweepCommand(argv: readonly string[], out: (s: string) => void, err: (s: string) => void): Promise<number> {
  const { values, positionals } = parseCommandArgs('sweep', argv, {
    ...ANALYSIS_OPTIONS,
    jobs: { type: 'string' },
    out: { type: 'string' },
    report: { type: 'string' },
    json: { type: 'boolean' },
    shard: { type: 'string' },
    'emit-slurm': { type: 'string' },
    tasks: { type: 'string' },
  });
  if (values.help) {
    out(SWEEP_HELP);
    return EXIT.done;
  }
  if (positionals.length !== 1)
    throw new UsageError("intradyne sweep: expected one DIR_OR_MANIFEST (see 'intradyne sweep --help')");
  const emit = values['emit-slurm'] as string | undefined;
  const tasks = positiveInteger('sweep', 'tasks', values.tasks as string | undefined);
  if (tasks !== undefined && tasks > LIMITS.maxTasks)
    throw new UsageError(`intradyne sweep: --tasks expected at most ${LIMITS.maxTasks}, received '${values.tasks}'`);
  if (emit !== undefined && values.shard !== undefined)
    throw new UsageError('intradyne sweep: --emit-slurm writes a script whose tasks choose their shard; give no --shard with it');
  if (emit !== undefined && tasks === undefined)
    throw new UsageError('intradyne sweep: --emit-slurm needs --tasks N, the number of array tasks (shards)');
  if (emit === undefined && tasks !== undefined) throw new UsageError('intradyne sweep: --tasks goes with --emit-slurm FILE');
  const jobsGiven = positiveInteger('sweep', 'jobs', values.jobs as string | undefined);
  if (jobsGiven !== undefined && jobsGiven > LIMITS.maxJobs)
    throw new UsageError(`intradyne sweep: --jobs expected at most ${LIMITS.maxJobs}, received '${values.jobs}'`);
  const shard = values.shard !== undefined ? parseShard(values.shard as string, process.env) : undefined;
  const settings = analysisSettingsFrom('sweep', values);
  const inputs = sweepInputs(positionals[0]);
  const outDir = (values.out as string | undefined) ?? defaultSweepOut(positionals[0], inputs.kind);
  if (emit !== undefined) {
    emitSlurm(emit, inputs, positionals[0], outDir, tasks!, jobsGiven ?? 1, values);
    out(
      `wrote ${emit}: ${inputs.captures.length} captures in ${tasks} array tasks; review it, then submit it with 'bash ${emit}'\n`,
    );
    return EXIT.done;
  }
  const jobs = jobsGiven ?? availableParallelism();
  const part = shard ? inShard(inputs.captures, shard).length : inputs.captures.length;
  const bar = new ProgressBar(part, err, process.stderr.isTTY === true && err === defaultErr);
  err(
    `sweeping ${part} captures of ${positionals[0]}${shard ? ` (shard ${shardLabel(shard)} of ${inputs.captures.length})` : ''} on ${Math.max(1, Math.min(jobs, part))} threads\n`,
  );
  const report = await runSweep(inputs, {
    out: outDir,
    jobs,
    settings,
    shard,
    report: values.report as string | undefined,
    onProgress: (k, a) => bar.tick(k, a),
    onNotice: (message) => err(`sweep: ${message}\n`),
  });
  bar.finish();
  if (values.json) {
    out(
      `${JSON.stringify({
        captures: report.captures,
        analysed: report.analysed,
        skipped: report.skipped,
        failed: report.failed,
        out: report.out,
        ...(shard ? { shard: shardLabel(shard), record: report.recordPath } : {}),
        csv: report.csvPath,
        arrow: report.arrowPath,
        journal: report.journalPath,
        report: report.reportPath,
        rows: report.rows,
      })}\n`,
    );
  } else {
    out(
      `${shard ? `shard ${shardLabel(shard)}: ` : ''}swept ${report.captures} captures: analysed ${report.analysed}, skipped ${report.skipped}, failed ${report.failed}\n` +
        `results: ${report.csvPath}, ${report.arrowPath}${report.reportPath ? `, report ${report.reportPath}` : ''}\n` +
        (shard ? `when all ${shard.count} shards have finished: intradyne merge ${outDir}\n` : ''),
    );
    printFailures(report.rows, out);
  }
  return report.failed > 0 ? EXIT.analysisFailed : EXIT.done;
}

/** Prints one line per failed row of a table: the capture, the failed check and why. */
export function printFailures(rows: readonly SweepRow[], out: (s: string) => void): void {
  for (const r of rows) if (r.ok !== true) out(`  ${r.capture}: ${r.failure_check}: ${r.failure_reason}\n`);
}

/** The process's stderr writer: the bar redraws in place only when writing there, to a terminal. */
export const defaultErr = (s: string) => void process.stderr.write(s);

/**
 * The command that runs intradyne here: node and the built main.js (beside
 * this module when built; the package's dist when running from the sources).
 */
export function intradyneCommand(): string[] {
  const beside = fileURLToPath(new URL('./main.js', import.meta.url));
  const main = existsSync(beside) ? beside : fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));
  return [process.execPath, main];
}

/**
 * The sweep's analysis options as command-line words, for the script's tasks
 * (a pipeline file as an absolute path, since tasks may start elsewhere).
 */
function analysisArgs(values: Record<string, string | boolean | undefined>): string[] {
  const args: string[] = [];
  for (const name of Object.keys(ANALYSIS_OPTIONS)) {
    const v = values[name];
    if (v === true) args.push(`--${name}`);
    else if (typeof v === 'string') args.push(`--${name}`, name === 'pipeline' ? resolve(v) : v);
  }
  return args;
}

/**
 * Writes the Slurm script (atomically, never over an existing file) after
 * checking the output folder, and creates the folder's `logs/` (Slurm does
 * not create the folder of a job's output file, so a plain `sbatch FILE`
 * needs it).
 */
function emitSlurm(
  file: string,
  inputs: SweepInputs,
  input: string,
  outDir: string,
  tasks: number,
  cpusPerTask: number,
  values: Record<string, string | boolean | undefined>,
): void {
  checkSweepOut(inputs, outDir);
  const text = slurmScript({
    tasks,
    cpusPerTask,
    command: intradyneCommand(),
    input: resolve(input),
    out: resolve(outDir),
    analysisArgs: analysisArgs(values),
    captures: inputs.captures.length,
    report: typeof values.report === 'string' ? resolve(values.report) : undefined,
  });
  writeFileAtomic(file, (append) => append(text), {}, 'Slurm script');
  prepareOutputFolder(join(resolve(outDir), 'logs'), 'Slurm logs folder');
}
