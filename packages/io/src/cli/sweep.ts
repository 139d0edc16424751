import { availableParallelism } from 'node:os';
import { ProgressBar } from '../sweep/progress.js';
import { defaultSweepOut, runSweep } from '../sweep/run-sweep.js';
import { sweepInputs } from '../sweep/sweep-inputs.js';
import { ANALYSIS_OPTIONS, analysisSettingsFrom } from './analyze.js';
import { parseCommandArgs, positiveInteger } from './args.js';
import { EXIT, UsageError } from './errors.js';

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
table from the journal. A capture that cannot be read is a row with check
'input' and does not stop the sweep.

Options:
  --jobs N              worker threads (default: the number of CPUs, ${availableParallelism()} here)
  --out DIR             output folder (default: <input>-sweep beside the input;
                        never the swept folder or inside it)
  --report FILE         also write a self-contained HTML report of the table there
                        (BER and GMI/NGMI against SNR with theory and FEC limits)
  --json                print the summary and the rows as one JSON object
  and every analysis option of 'intradyne analyze' (applied to every capture):
  --modulation M, --symbol-rate BD, --sample-rate SAS, --roll-off B,
  --dispersion PSNM, --no-blind-dispersion, --skip N, --pipeline FILE
  -h, --help            this text

The progress bar and its ETA go to stderr; the summary to stdout.
Exit codes: 0 every capture analysed, 1 some analysis failed or some capture
could not be read (see the table), 2 bad usage or input.
`;

export async function sweepCommand(argv: readonly string[], out: (s: string) => void, err: (s: string) => void): Promise<number> {
  const { values, positionals } = parseCommandArgs('sweep', argv, {
    ...ANALYSIS_OPTIONS,
    jobs: { type: 'string' },
    out: { type: 'string' },
    report: { type: 'string' },
    json: { type: 'boolean' },
  });
  if (values.help) {
    out(SWEEP_HELP);
    return EXIT.done;
  }
  if (positionals.length !== 1)
    throw new UsageError("intradyne sweep: expected one DIR_OR_MANIFEST (see 'intradyne sweep --help')");
  const jobs = positiveInteger('sweep', 'jobs', values.jobs as string | undefined) ?? availableParallelism();
  const settings = analysisSettingsFrom('sweep', values);
  const inputs = sweepInputs(positionals[0]);
  const outDir = (values.out as string | undefined) ?? defaultSweepOut(positionals[0], inputs.kind);
  const bar = new ProgressBar(inputs.captures.length, err, process.stderr.isTTY === true && err === defaultErr);
  err(`sweeping ${inputs.captures.length} captures of ${positionals[0]} on ${Math.min(jobs, inputs.captures.length)} threads\n`);
  const report = await runSweep(inputs, {
    out: outDir,
    jobs,
    settings,
    report: values.report as string | undefined,
    onProgress: (k, a) => bar.tick(k, a),
  });
  bar.finish();
  if (values.json) {
    out(
      `${JSON.stringify({
        captures: report.captures,
        analysed: report.analysed,
        skipped: report.skipped,
        failed: report.failed,
        out: outDir,
        csv: report.csvPath,
        arrow: report.arrowPath,
        journal: report.journalPath,
        report: report.reportPath,
        rows: report.rows,
      })}\n`,
    );
  } else {
    out(
      `swept ${report.captures} captures: analysed ${report.analysed}, skipped ${report.skipped}, failed ${report.failed}\n` +
        `results: ${report.csvPath}, ${report.arrowPath}${report.reportPath ? `, report ${report.reportPath}` : ''}\n`,
    );
    for (const r of report.rows.filter((r) => r.ok !== true)) out(`  ${r.capture}: ${r.failure_check}: ${r.failure_reason}\n`);
  }
  return report.failed > 0 ? EXIT.analysisFailed : EXIT.done;
}

/** The process's stderr writer: the bar redraws in place only when writing there, to a terminal. */
export const defaultErr = (s: string) => void process.stderr.write(s);
