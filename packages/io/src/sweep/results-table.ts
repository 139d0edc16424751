import { join } from 'node:path';
import { resultsArrowBytes } from '../arrow/arrow-write.js';
import { commitTogether, type StagedFile, stageFile } from '../write/atomic.js';
import { columnKind, INTEGER_COLUMNS, RESULT_COLUMNS, rowProblem, type SweepRow } from './result-row.js';

/** The files a results table was written to. */
export interface ResultsTableFiles {
  /** Path of `results.csv`. */
  readonly csvPath: string;
  /** Path of `results.arrow`. */
  readonly arrowPath: string;
}

/** The schema metadata of results.arrow. */
const TABLE_METADATA = { table: 'intradyne sweep results' } as const;

/**
 * Writes a sweep's final table into a folder: `results.csv` and
 * `results.arrow`, replacing an earlier table. The one last step of every
 * way a table is made (a sweep, a shard of one, a merge of shards), so that
 * equal rows give byte-identical files. Every row is checked first, then
 * both files are staged and only then put in place: the two tables never
 * disagree, and a full disk leaves the earlier pair as it was.
 * @param rows the rows in the sweep's order (may be empty: a shard can hold no capture)
 * @throws OutputError when the folder cannot take the files; Error for a
 *   row that is not a valid results row (a bug: rows read from files are
 *   checked when read)
 */
export function writeResultsTable(out: string, rows: readonly SweepRow[]): ResultsTableFiles {
  const { files, stages } = resultsTableStages(out, rows);
  commitTogether(stages);
  return files;
}

/**
 * The staging steps of {@link writeResultsTable}, for a caller that commits
 * them together with other files (the sweep's report).
 */
export function resultsTableStages(
  out: string,
  rows: readonly SweepRow[],
): { readonly files: ResultsTableFiles; readonly stages: (() => StagedFile)[] } {
  rows.forEach((r, i) => {
    const problem = rowProblem(r);
    if (problem !== null) throw new Error(`results table: row ${i + 1} (${String(r.capture)}): ${problem}`);
  });
  const csvPath = join(out, 'results.csv');
  const arrowPath = join(out, 'results.arrow');
  const csv = resultsCsvText(rows);
  const arrow = resultsTableArrowBytes(rows);
  return {
    files: { csvPath, arrowPath },
    stages: [
      () => stageFile(csvPath, (append) => append(csv), { overwrite: true }, 'results table'),
      () => stageFile(arrowPath, (append) => append(arrow), { overwrite: true }, 'results table'),
    ],
  };
}

/** A CSV field: numbers as the shortest text that reads back, booleans as true/false, empty for null; quoted when needed (RFC 4180). */
function field(v: number | string | boolean | null): string {
  if (v === null) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  const text = String(v);
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/** The results table as CSV text: a header row of {@link RESULT_COLUMNS}, one row per capture, RFC 4180 quoting. */
function resultsCsvText(rows: readonly SweepRow[]): string {
  return [RESULT_COLUMNS.join(','), ...rows.map((r) => RESULT_COLUMNS.map((c) => field(r[c])).join(','))]
    .map((line) => `${line}\n`)
    .join('');
}

/**
 * The results table as Arrow IPC (file format): text columns UTF-8, counts
 * Int64, booleans Bool, other numbers float64, nulls where a value is
 * missing; with no row, the same schema.
 */
function resultsTableArrowBytes(rows: readonly SweepRow[]): Uint8Array {
  // Every row has every column, so the column order is RESULT_COLUMNS.
  const ordered = rows.map((r) => Object.fromEntries(RESULT_COLUMNS.map((c) => [c, r[c]])));
  return resultsArrowBytes(ordered, {
    metadata: TABLE_METADATA,
    integerColumns: [...INTEGER_COLUMNS],
    kinds: Object.fromEntries(RESULT_COLUMNS.map((c) => [c, columnKind(c)])),
  });
}
