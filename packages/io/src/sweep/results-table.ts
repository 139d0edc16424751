import { writeResultsArrow } from '../arrow/arrow-write.js';
import { writeFileAtomic } from '../write/atomic.js';
import { RESULT_COLUMNS, type SweepRow } from './result-row.js';

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
 * numbers float64, `ok` as 1/0, nulls where a value is missing. Atomic.
 */
export function writeResultsTableArrow(path: string, rows: readonly SweepRow[]): void {
  // Every row has every column, so the column order is RESULT_COLUMNS.
  const ordered = rows.map((r) => Object.fromEntries(RESULT_COLUMNS.map((c) => [c, r[c]])));
  writeResultsArrow(path, ordered, { overwrite: true, metadata: { table: 'intradyne sweep results' } });
}
