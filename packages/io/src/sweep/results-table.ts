import { join } from 'node:path';
import { writeEmptyResultsArrow, writeResultsArrow } from '../arrow/arrow-write.js';
import { writeFileAtomic } from '../write/atomic.js';
import { RESULT_COLUMNS, type SweepRow, TEXT_COLUMNS } from './result-row.js';

/** The files a results table was written to. */
export interface ResultsTableFiles {
  /** Path of `results.csv`. */
  readonly csvPath: string;
  /** Path of `results.arrow`. */
  readonly arrowPath: string;
}

/**
 * Writes a sweep's final table into a folder: `results.csv` and
 * `results.arrow`, atomically, replacing an earlier table. The one last step
 * of every way a table is made (a sweep, a shard of one, a merge of shards),
 * so that equal rows give byte-identical files.
 * @param rows the rows in the sweep's order (may be empty: a shard can hold no capture)
 */
export function writeResultsTable(out: string, rows: readonly SweepRow[]): ResultsTableFiles {
  const csvPath = join(out, 'results.csv');
  const arrowPath = join(out, 'results.arrow');
  writeResultsCsv(csvPath, rows);
  writeResultsTableArrow(arrowPath, rows);
  return { csvPath, arrowPath };
}

/** A CSV field: numbers as the shortest text that reads back, booleans as true/false, empty for null; quoted when needed (RFC 4180). */
function field(v: number | string | boolean | null): string {
  if (v === null) return '';
  if (typeof v === 'number') return Number.isFinite(v) ? String(v) : '';
  const text = String(v);
  return /[",\r\n]/.test(text) ? `"${text.replaceAll('"', '""')}"` : text;
}

/**
 * Writes the results table as CSV (header row of {@link RESULT_COLUMNS}, one
 * row per capture, RFC 4180 quoting), atomically, replacing an earlier table.
 */
export function writeResultsCsv(path: string, rows: readonly SweepRow[]): void {
  writeFileAtomic(
    path,
    (append) => {
      append(`${RESULT_COLUMNS.join(',')}\n`);
      for (const r of rows) append(`${RESULT_COLUMNS.map((c) => field(r[c])).join(',')}\n`);
    },
    { overwrite: true },
  );
}

/**
 * Writes the results table as Arrow IPC (file format): text columns UTF-8,
 * numbers float64, `ok` as 1/0, nulls where a value is missing. Atomic. With
 * no row, the columns are typed by {@link TEXT_COLUMNS}.
 */
export function writeResultsTableArrow(path: string, rows: readonly SweepRow[]): void {
  if (rows.length === 0) {
    const kinds = Object.fromEntries(RESULT_COLUMNS.map((c) => [c, TEXT_COLUMNS.has(c) ? 'text' : 'number'] as const));
    writeEmptyResultsArrow(path, kinds, { overwrite: true, metadata: { table: 'intradyne sweep results' } });
    return;
  }
  // Every row has every column, so the column order is RESULT_COLUMNS.
  const ordered = rows.map((r) => Object.fromEntries(RESULT_COLUMNS.map((c) => [c, r[c]])));
  writeResultsArrow(path, ordered, { overwrite: true, metadata: { table: 'intradyne sweep results' } });
}
