import { type SweepReportContext, sweepReport } from '../report/sweep-report.js';
import { writeReport } from '../report/write-report.js';
import type { SweepRow } from './result-row.js';
import { type ResultsTableFiles, writeResultsTable } from './results-table.js';

/** The files a sweep's final rows were written to. */
export interface SweepOutputPaths extends ResultsTableFiles {
  /** The HTML report, when one was asked for. */
  readonly reportPath: string | null;
}

/**
 * Writes a sweep's final rows: `results.csv` and `results.arrow` in `out`,
 * and, when `report` is given, the HTML report at `report.path`. The one
 * place that turns final rows into files, for a sweep and for anything
 * else that assembles final rows (merged shards).
 * @throws InputError when the report path is one of `report.inputs`
 * @example writeSweepOutputs('lab-sweep', rows, { path: 'lab.html', context: { source: 'lab', library: 'intradyne', version: LIBRARY_VERSION } });
 */
export function writeSweepOutputs(
  out: string,
  rows: readonly SweepRow[],
  report?: { readonly path: string; readonly context: SweepReportContext; readonly inputs?: readonly string[] },
): SweepOutputPaths {
  const table = writeResultsTable(out, rows);
  if (report) writeReport(report.path, sweepReport(rows, report.context), report.inputs);
  return { ...table, reportPath: report?.path ?? null };
}
