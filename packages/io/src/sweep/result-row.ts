import type { FileAnalysis } from '../analysis/analyze-file.js';
import type { ResultRow } from '../arrow/arrow-write.js';
import {
  ANALYSIS_FIGURES,
  CAPTURE_FIGURES,
  type ColumnKind,
  figureCells,
  QUALITY_FIGURES,
  RESULT_COLUMN_SPECS,
} from '../figures/figure-schema.js';
import { pipelineFingerprint } from './fingerprint.js';

/**
 * The columns of a sweep's results table, in order, made from the figure
 * schema (`RESULT_COLUMN_SPECS`). Rates in Bd and Sa/s, frequencies in Hz,
 * SNR and Q in dB, GMI and MI in bits per symbol (both polarizations for
 * the totals, one for the `x_`/`y_` columns), EVM as a fraction.
 * `failure_check` is the failed check ('equalizer', 'reference',
 * 'modulation', 'length'; 'input' for a capture that could not be read;
 * 'error' for an unexpected error) and `failure_reason` why; the figures are
 * empty then. `warnings` holds what the analysis noticed without failing
 * (an Arrow stream without its end marker…), '; '-separated. A capture
 * without bit errors has no BER estimate: `ber` then holds the upper end of
 * its 95 % interval and `ber_is_upper_bound` is true, and `q_db`, computed
 * from it, is a lower bound (`q_db_is_lower_bound`); the same per
 * polarization. `input_sha256` hashes the capture's files (see
 * `captureInputHash`), `samples_sha256` the samples analysed, and
 * `pipeline_sha256` the library version and chain (see `pipelineFingerprint`).
 */
export const RESULT_COLUMNS: readonly string[] = RESULT_COLUMN_SPECS.map((c) => c.name);

/** One column name of the results table. */
export type ResultColumn = string;

const KINDS: ReadonlyMap<string, ColumnKind> = new Map(RESULT_COLUMN_SPECS.map((c) => [c.name, c.kind]));

const columnsOfKind = (kind: ColumnKind): ReadonlySet<ResultColumn> =>
  new Set(RESULT_COLUMN_SPECS.filter((c) => c.kind === kind).map((c) => c.name));

/** The columns that hold text. */
export const TEXT_COLUMNS: ReadonlySet<ResultColumn> = columnsOfKind('text');

/** The columns that hold true or false (Bool in Arrow, `true`/`false` in CSV). */
export const BOOLEAN_COLUMNS: ReadonlySet<ResultColumn> = columnsOfKind('boolean');

/** The columns that hold counts (Int64 in Arrow). */
export const INTEGER_COLUMNS: ReadonlySet<ResultColumn> = columnsOfKind('integer');

/** What a column holds: text, a boolean, a count, or any other number (float64). */
export function columnKind(c: ResultColumn): ColumnKind {
  const kind = KINDS.get(c);
  if (kind === undefined) throw new RangeError(`columnKind: '${c}' is not a column of the results table`);
  return kind;
}

/** One row of the results table: a value (or null) per column. */
export type SweepRow = Readonly<Record<ResultColumn, number | string | boolean | null>> & ResultRow;

type Cell = number | string | boolean | null;

const emptyRow = (): Record<ResultColumn, Cell> => Object.fromEntries(RESULT_COLUMNS.map((c) => [c, null]));

/**
 * A results row of one analysis, every cell from the figure schema.
 * @param key the capture's path relative to the sweep root
 * @param inputSha256 the capture's input hash (null when it could not be read)
 */
export function rowFromAnalysis(key: string, analysis: FileAnalysis, inputSha256: string | null): SweepRow {
  const { result } = analysis;
  const m = result.measurement;
  const cells: [string, unknown][] = [
    ['capture', key],
    ...CAPTURE_FIGURES.flatMap((f) => figureCells(f, analysis)),
    ['failure_check', result.failure?.check ?? null],
    ['failure_reason', result.failure?.reason ?? null],
    ['warnings', analysis.capture.warnings.length > 0 ? analysis.capture.warnings.join('; ') : null],
    ...QUALITY_FIGURES.flatMap((f) => figureCells(f, m)),
    ...ANALYSIS_FIGURES.flatMap((f) => figureCells(f, analysis)),
    ...(['x', 'y'] as const).flatMap((p) =>
      QUALITY_FIGURES.filter((f) => f.perPolColumn).flatMap((f) => figureCells(f, m ? m.perPol[p] : null, `${p}_`)),
    ),
    ['input_sha256', inputSha256],
    ['samples_sha256', result.record.inputSha256],
    ['pipeline_sha256', pipelineFingerprint(result.record.version, result.record.pipeline)],
  ];
  const row = emptyRow();
  for (const [c, v] of cells) row[c] = v as Cell;
  return row as SweepRow;
}

/** The row of a capture that could not be analysed: `check` 'input' or 'error', the message as the reason. */
export function rowFromError(key: string, check: 'input' | 'error', reason: string, inputSha256: string | null): SweepRow {
  return {
    ...emptyRow(),
    capture: key,
    ok: false,
    failure_check: check,
    failure_reason: reason,
    input_sha256: inputSha256,
  } as SweepRow;
}

const SHA256 = /^[0-9a-f]{64}$/;
const PROBABILITIES: readonly ResultColumn[] = ['ber', 'ber_ci95_lo', 'ber_ci95_hi', 'ser', 'x_ber', 'y_ber'];
const describe = (v: unknown): string => (v === undefined ? 'nothing' : (JSON.stringify(v)?.slice(0, 60) ?? String(v)));

/**
 * What is wrong with a results row read back from a file (a sweep's journal,
 * a shard record), in words, or null when it is a row this version writes:
 * every column of {@link RESULT_COLUMNS} and no other, each of its kind
 * (text, boolean, a count, a finite number, or null), probabilities in
 * [0, 1], bit errors at most the bits, fingerprints as SHA-256 in hex, and
 * the figures of a measured row present. Rows are checked like any input
 * before they reach a table, so that a damaged or hand-edited line never
 * becomes an `undefined` or NaN cell.
 * @example rowProblem({ capture: 'a.csv' }) // "column 'modulation': expected text or null, received nothing"
 */
export function rowProblem(row: unknown): string | null {
  if (row === null || typeof row !== 'object' || Array.isArray(row)) return `expected an object, received ${describe(row)}`;
  const r = row as Record<string, unknown>;
  for (const k of Object.keys(r))
    if (!(RESULT_COLUMNS as readonly string[]).includes(k))
      return `column ${JSON.stringify(k).slice(0, 60)}: not a column of the table`;
  for (const c of RESULT_COLUMNS) {
    const v = r[c];
    if (v === null) continue;
    const kind = columnKind(c);
    const ok =
      kind === 'text'
        ? typeof v === 'string'
        : kind === 'boolean'
          ? typeof v === 'boolean'
          : kind === 'integer'
            ? typeof v === 'number' && Number.isSafeInteger(v) && v >= 0
            : typeof v === 'number' && Number.isFinite(v);
    const words = { text: 'text', boolean: 'true or false', integer: 'a whole number ≥ 0', number: 'a finite number' }[kind];
    if (!ok) return `column '${c}': expected ${words} or null, received ${describe(v)}`;
  }
  if (typeof r.capture !== 'string' || r.capture === '')
    return `column 'capture': expected the capture's key, received ${describe(r.capture)}`;
  if (typeof r.ok !== 'boolean') return `column 'ok': expected true or false, received ${describe(r.ok)}`;
  for (const c of PROBABILITIES) {
    const v = r[c];
    if (typeof v === 'number' && !(v >= 0 && v <= 1)) return `column '${c}': expected a probability in [0, 1], received ${v}`;
  }
  for (const c of ['input_sha256', 'samples_sha256', 'pipeline_sha256'] as const) {
    const v = r[c];
    if (typeof v === 'string' && !SHA256.test(v)) return `column '${c}': expected a SHA-256 in hex, received ${describe(v)}`;
  }
  if (typeof r.bit_errors === 'number' && typeof r.bits === 'number' && r.bit_errors > r.bits)
    return `column 'bit_errors': expected at most the bits (${r.bits}), received ${r.bit_errors}`;
  if (r.ok === true) {
    for (const c of ['ber', 'ber_is_upper_bound', 'bit_errors', 'bits'] as const)
      if (r[c] === null) return `column '${c}': expected a value in a measured row (ok true), received null`;
    if (r.failure_check !== null)
      return `column 'failure_check': expected null in a measured row, received ${describe(r.failure_check)}`;
  } else if (typeof r.failure_check !== 'string') {
    return `column 'failure_check': expected the failed check in a row with ok false, received ${describe(r.failure_check)}`;
  }
  return null;
}
