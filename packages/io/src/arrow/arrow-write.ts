import type { DualPol, ScopeChannels } from '@intradyne/core';
import {
  AsyncByteQueue,
  Bool,
  Float64,
  Int64,
  makeTable,
  RecordBatchFileWriter,
  RecordBatchStreamWriter,
  Table,
  tableToIPC,
  Utf8,
  type Vector,
  vectorFromArray,
} from 'apache-arrow';
import { type AtomicWriteOptions, type StagedFile, stageFile, writeFileAtomic } from '../write/atomic.js';

/** Options of the Arrow writers. */
export interface ArrowWriteOptions extends AtomicWriteOptions {
  /** IPC format: 'file' (default; random access, `.arrow`) or 'stream' (`.arrows`). */
  readonly format?: 'file' | 'stream';
  /** Schema metadata, key → text. */
  readonly metadata?: Readonly<Record<string, string>>;
}

/** The IPC bytes of a table, with the options' metadata. */
function ipcBytes(table: Table, options: ArrowWriteOptions): Uint8Array {
  if (options.metadata) for (const [k, v] of Object.entries(options.metadata)) table.schema.metadata.set(k, v);
  return tableToIPC(table, options.format ?? 'file');
}

function write(path: string, table: Table, options: ArrowWriteOptions): void {
  const bytes = ipcBytes(table, options);
  writeFileAtomic(path, (append) => append(bytes), options);
}

/** Rows per record batch: a reader holds one batch at a time (2 MB for four float64 columns). */
const BATCH_ROWS = 1 << 16;

/** Float64 columns of equal length as a table of record batches of {@link BATCH_ROWS} rows. */
function float64Table(columns: Record<string, Float64Array>): Table {
  const names = Object.keys(columns);
  const n = columns[names[0]].length;
  if (n <= BATCH_ROWS) return makeTable(columns);
  const batches = [];
  for (let at = 0; at < n; at += BATCH_ROWS) {
    const part: Record<string, Float64Array> = {};
    for (const name of names) part[name] = columns[name].subarray(at, Math.min(n, at + BATCH_ROWS));
    batches.push(...makeTable(part).batches);
  }
  return new Table(batches);
}

/**
 * Writes a four-channel capture as Arrow IPC: float64 columns `xi, xq, yi, yq`,
 * the sample rate in the schema metadata (`sampleRate`, Sa/s) with any other
 * metadata given. Atomic (temporary file, then rename).
 * @throws OutputExistsError when the file exists and `overwrite` is not set
 * @example writeCaptureArrow('run-07.arrow', sim.channels, { metadata: { symbolRate: '32e9', modulation: 'qpsk' } });
 */
export function writeCaptureArrow(path: string, channels: ScopeChannels, options: ArrowWriteOptions = {}): void {
  const { xi, xq, yi, yq, sampleRate } = channels;
  write(path, float64Table({ xi, xq, yi, yq }), {
    ...options,
    metadata: { sampleRate: String(sampleRate), ...options.metadata },
  });
}

/** Splits interleaved complex symbols into real and imaginary columns. */
function parts(z: Float64Array): [Float64Array, Float64Array] {
  const n = z.length >> 1;
  const re = new Float64Array(n);
  const im = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    re[k] = z[2 * k];
    im[k] = z[2 * k + 1];
  }
  return [re, im];
}

/**
 * Writes dual-polarization symbols (recovered symbols, or a reference) as
 * Arrow IPC with float64 columns `x_re, x_im, y_re, y_im`, one row per
 * symbol. Atomic.
 * @throws RangeError when x and y differ in length; OutputExistsError as {@link writeCaptureArrow}
 * @example writeSymbolsArrow('run-07.symbols.arrow', result.recovered!);
 */
export function writeSymbolsArrow(path: string, symbols: DualPol, options: ArrowWriteOptions = {}): void {
  if (symbols.x.length !== symbols.y.length) {
    throw new RangeError(`writeSymbolsArrow: x has ${symbols.x.length >> 1} symbols, y has ${symbols.y.length >> 1}`);
  }
  const [x_re, x_im] = parts(symbols.x);
  const [y_re, y_im] = parts(symbols.y);
  write(path, float64Table({ x_re, x_im, y_re, y_im }), options);
}

/**
 * Writes dual-polarization symbols as they are produced, in the layout of
 * {@link writeSymbolsArrow}, without holding them: `produce` is called with
 * an `add` function to call with each block of symbols in order; every
 * block becomes record batches of at most 65,536 rows appended to a
 * temporary file, which replaces `path` once `produce` returns (atomic; if
 * `produce` throws, nothing is written). Returns what `produce` returns.
 * @throws RangeError when a block's x and y differ in length; OutputExistsError as {@link writeCaptureArrow}
 * @example const result = writeSymbolsArrowStreaming(path, (add) => analyzeCapture(blocks, s, ref, { onSymbols: add }));
 */
export function writeSymbolsArrowStreaming<T>(
  path: string,
  produce: (add: (symbols: DualPol) => void) => T,
  options: AtomicWriteOptions & { readonly format?: 'file' | 'stream' } = {},
): T {
  const { staged, result } = stageSymbolsArrowStreaming(path, produce, options);
  staged.commit();
  return result;
}

/**
 * {@link writeSymbolsArrowStreaming} without the last step: the complete
 * file is left staged (see `stageFile`) for the caller to commit with its
 * other outputs, or to discard.
 * @throws as {@link writeSymbolsArrowStreaming}
 * @example const { staged, result } = stageSymbolsArrowStreaming(path, produce); staged.commit();
 */
export function stageSymbolsArrowStreaming<T>(
  path: string,
  produce: (add: (symbols: DualPol) => void) => T,
  options: AtomicWriteOptions & { readonly format?: 'file' | 'stream' } = {},
): {
  /** The complete file under its temporary name, to commit or discard. */
  readonly staged: StagedFile;
  /** What `produce` returned. */
  readonly result: T;
} {
  let result: T | undefined;
  const staged = stageFile(
    path,
    (append) => {
      const writer = options.format === 'stream' ? new RecordBatchStreamWriter() : new RecordBatchFileWriter();
      writer.reset(new AppendingSink(append));
      let written = false;
      const add = (symbols: DualPol) => {
        if (symbols.x.length !== symbols.y.length) {
          throw new RangeError(
            `writeSymbolsArrowStreaming: x has ${symbols.x.length >> 1} symbols, y has ${symbols.y.length >> 1}`,
          );
        }
        // An empty block is skipped: its batch's schema would differ (no rows), which ends the writer.
        if (symbols.x.length === 0) return;
        const [x_re, x_im] = parts(symbols.x);
        const [y_re, y_im] = parts(symbols.y);
        for (const batch of float64Table({ x_re, x_im, y_re, y_im }).batches) writer.write(batch);
        written = true;
      };
      result = produce(add);
      // No symbols: an empty table still gives the file its schema.
      if (!written) {
        const none = new Float64Array(0);
        writer.write(float64Table({ x_re: none, x_im: none, y_re: none, y_im: none }));
      }
      writer.close();
    },
    options,
  );
  return { staged, result: result as T };
}

/** apache-arrow's writer sink, appending each chunk to the file as it is written. */
class AppendingSink extends AsyncByteQueue {
  constructor(private readonly append: (chunk: Uint8Array) => void) {
    super();
  }

  override write(value: ArrayBufferView | string): void {
    if (typeof value === 'string') this.append(Buffer.from(value));
    else this.append(new Uint8Array(value.buffer, value.byteOffset, value.byteLength));
  }
}

/** A row of a results table: named numbers, strings or missing values. */
export type ResultRow = Readonly<Record<string, number | string | boolean | null | undefined>>;

/** Options of {@link writeResultsArrow}. */
export interface ResultsArrowOptions extends ArrowWriteOptions {
  /**
   * Columns of whole numbers (counts), written as Int64; each value must be
   * a safe integer or missing. Other numeric columns are float64.
   */
  readonly integerColumns?: readonly string[];
}

/** The type of each column of a results table, by name. */
export type ResultsColumnKind = 'text' | 'number' | 'integer' | 'boolean';

/**
 * Writes a results table (one row per capture, say) as Arrow IPC, readable
 * by Python, R and SQL tools. Columns appear in the order their names are
 * first met; a column whose values are all numbers (or missing) is float64,
 * or Int64 when named in `integerColumns`; booleans make a Bool column,
 * strings a UTF-8 column; a missing value is null. Atomic.
 * @throws RangeError when a column mixes kinds, an integer column holds a
 *   fraction, or there is no row
 * @example writeResultsArrow('results.arrow', [{ capture: 'run-07.csv', ber: 1.2e-3, ok: true }]);
 */
export function writeResultsArrow(path: string, rows: readonly ResultRow[], options: ResultsArrowOptions = {}): void {
  const bytes = resultsArrowBytes(rows, options);
  writeFileAtomic(path, (append) => append(bytes), options);
}

/**
 * The Arrow IPC bytes {@link writeResultsArrow} writes, for a caller that
 * stages several files together. With no row, `kinds` gives the schema.
 * @throws RangeError as {@link writeResultsArrow} (with no row and no `kinds`)
 * @example const bytes = resultsArrowBytes(rows, { integerColumns: ['bits'] });
 */
export function resultsArrowBytes(
  rows: readonly ResultRow[],
  options: ResultsArrowOptions & { readonly kinds?: Readonly<Record<string, ResultsColumnKind>> } = {},
): Uint8Array {
  if (rows.length === 0) {
    if (!options.kinds) throw new RangeError('writeResultsArrow: expected at least one row');
    const vectors: Record<string, Vector> = {};
    for (const [name, kind] of Object.entries(options.kinds)) vectors[name] = vectorFromArray([], arrowType(kind));
    return ipcBytes(new Table(vectors), options);
  }
  const names: string[] = [];
  for (const r of rows) for (const k of Object.keys(r)) if (!names.includes(k)) names.push(k);
  const integers = new Set(options.integerColumns ?? []);
  const columns: Record<string, Vector> = {};
  for (const name of names) {
    const values = rows.map((r) => r[name]);
    const present = values.filter((v) => v !== null && v !== undefined);
    const missing = (v: unknown) => v === undefined || v === null;
    if (present.every((v) => typeof v === 'string')) {
      columns[name] = vectorFromArray(
        values.map((v) => (missing(v) ? null : (v as string))),
        new Utf8(),
      );
    } else if (present.every((v) => typeof v === 'boolean')) {
      columns[name] = vectorFromArray(
        values.map((v) => (missing(v) ? null : (v as boolean))),
        new Bool(),
      );
    } else if (present.every((v) => typeof v === 'number')) {
      if (integers.has(name)) {
        const bad = present.find((v) => !Number.isSafeInteger(v));
        if (bad !== undefined)
          throw new RangeError(`writeResultsArrow: column '${name}' expected whole numbers, received ${bad}`);
        columns[name] = vectorFromArray(
          values.map((v) => (missing(v) ? null : BigInt(v as number))),
          new Int64(),
        );
      } else
        columns[name] = vectorFromArray(
          values.map((v) => (missing(v) ? null : (v as number))),
          new Float64(),
        );
    } else {
      throw new RangeError(`writeResultsArrow: column '${name}' expected numbers, booleans or strings, received a mix`);
    }
  }
  return ipcBytes(new Table(columns), options);
}

function arrowType(kind: ResultsColumnKind) {
  return kind === 'text' ? new Utf8() : kind === 'boolean' ? new Bool() : kind === 'integer' ? new Int64() : new Float64();
}
