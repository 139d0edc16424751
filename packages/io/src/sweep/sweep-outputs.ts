import { type SweepReportContext, sweepReport } from '../report/sweep-report.js';
import { checkReportPath, stageReport } from '../report/write-report.js';
import { commitTogether } from '../write/atomic.js';
import type { SweepRow } from './result-row.js';
import { type ResultsTableFiles, resultsTableStages } from './results-table.js';

/** The files a sweep's final rows were written to. */
export interface SweepOutputPaths extends ResultsTableFiles {
  /** The HTML report, when one was asked for. */
  readonly reportPath: string | null;
}

/**
 * Writes a sweep's final rows: `results.csv` and `results.arrow` in `out`,
 * and, when `report` is given, the HTML report at `report.path`. The one
 * place that turns final rows into files, for a sweep and for anything
 * else that assembles final rows (merged shards). All of them are staged
 * before any is put in place, so that a failure (a full disk, a folder in
 * the report's way) leaves the earlier files as they were.
 * @throws InputError when the report path is one of `report.inputs`; OutputError when a file cannot be written
 * @example writeSweepOutputs('lab-sweep', rows, { path: 'lab.html', context: { source: 'lab', library: 'intradyne', version: LIBRARY_VERSION } });
 */
export function writeSweepOutputs(
  out: string,
  rows: readonly SweepRow[],
  report?: { readonly path: string; readonly context: SweepReportContext; readonly inputs?: readonly string[] },
): SweepOutputPaths {
  const table = resultsTableStages(out, rows);
  const stages = [...table.stages];
  if (report) {
    checkReportPath(report.path, report.inputs);
    const html = sweepReport(rows, report.context);
    stages.push(() => stageReport(report.path, html, report.inputs));
  }
  commitTogether(stages);
  return { ...table.files, reportPath: report?.path ?? null };
}
