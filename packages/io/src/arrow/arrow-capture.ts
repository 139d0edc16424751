import { closeSync, fstatSync } from 'node:fs';
import { CHANNEL_NAMES, type ChannelBlock, type ChannelName, concatBlocks, type DualPol } from '@intradyne/core';
import {
  MessageReader,
  type RecordBatch,
  RecordBatchReader,
  RecordBatchStreamWriter,
  type Schema,
  Type,
  type Vector,
} from 'apache-arrow';
import { LIMITS } from '../capture/limits.js';
import { checkReferenceLength, dualPolFromColumns, REFERENCE_COLUMNS } from '../capture/reference.js';
import { InputError, withLinkTarget } from '../errors/input-error.js';
import { linkTarget, openInput, openInputAsync, readInput } from '../load/open-file.js';

/** Options of the Arrow capture readers ({@link readArrowCapture}, {@link loadArrowCapture}). */
export interface ArrowCaptureOptions {
  /** Column names (case-insensitive) of the channels, e.g. `{ xi: 'CH1' }`; by default the channel names. */
  readonly columns?: Partial<Record<ChannelName, string>>;
  /** Sample rate, Sa/s; by default the schema metadata's `sampleRate`. */
  readonly sampleRate?: number;
  /** Nominal samples per symbol carried by the blocks (default NaN). */
  readonly samplesPerSymbol?: number;
}

/** Finds named float32/float64 columns in a schema. @throws InputError for a missing, duplicate or non-float column */
function columnIndexes(schema: Schema, names: readonly string[], file: string): number[] {
  return names.map((name) => {
    const hits: number[] = [];
    schema.fields.forEach((f, i) => {
      if (f.name.toLowerCase() === name.toLowerCase()) hits.push(i);
    });
    if (hits.length !== 1) {
      throw new InputError(
        { file },
        'schema',
        `one column named '${name}' (case-insensitive)`,
        hits.length === 0
          ? `the columns ${schema.fields.map((f) => JSON.stringify(f.name)).join(', ')}`
          : `${hits.length} of them (fields ${hits.map((h) => h + 1).join(', ')})`,
      );
    }
    const f = schema.fields[hits[0]];
    const t = f.type as { typeId: Type; precision?: number };
    // Precision 1 is single, 2 is double (Arrow's Precision enum).
    if (t.typeId !== Type.Float || (t.precision !== 1 && t.precision !== 2)) {
      throw new InputError({ file }, `column '${f.name}'`, 'a float32 or float64 column', `type ${String(f.type)}`);
    }
    return hits[0];
  });
}

/**
 * Copies one column of a record batch to a Float64Array, refusing nulls and
 * non-finite values. (`toArray()` on a vector of one batch is a view of its
 * single buffer; it would ignore the validity bitmap, hence the null check.)
 * @param firstRow 0-based index of the batch's first row in the file
 */
function columnValues(v: Vector, name: string, firstRow: number, file: string): Float64Array {
  if (v.nullCount > 0) {
    let i = 0;
    while (i < v.length && v.isValid(i)) i++;
    throw new InputError({ file }, `column '${name}', row ${firstRow + i + 1}`, 'a number', 'null');
  }
  const out = new Float64Array(v.toArray() as Float32Array | Float64Array);
  for (let i = 0; i < out.length; i++) {
    if (!Number.isFinite(out[i])) {
      throw new InputError({ file }, `column '${name}', row ${firstRow + i + 1}`, 'a finite number', String(out[i]));
    }
  }
  return out;
}

function metadataRate(schema: Schema, file: string): number | undefined {
  const text = schema.metadata.get('sampleRate');
  if (text === undefined) return undefined;
  const v = Number(text);
  if (!(Number.isFinite(v) && v > 0)) {
    throw new InputError({ file }, "schema metadata 'sampleRate'", 'a positive number of Sa/s', JSON.stringify(text));
  }
  return v;
}

class ArrowBlocks {
  private indexes: number[] | null = null;
  private rate = Number.NaN;
  private row = 0;

  constructor(
    private readonly file: string,
    private readonly options: ArrowCaptureOptions,
  ) {}

  block(batch: RecordBatch): ChannelBlock {
    if (this.indexes === null) {
      const schema = batch.schema;
      this.indexes = columnIndexes(
        schema,
        CHANNEL_NAMES.map((c) => this.options.columns?.[c] ?? c),
        this.file,
      );
      const rate = this.options.sampleRate ?? metadataRate(schema, this.file);
      if (rate === undefined) {
        throw new InputError(
          { file: this.file },
          'sample rate',
          "a stated sample rate (the descriptor's sampleRate or the schema metadata's)",
          'neither',
        );
      }
      this.rate = rate;
    }
    const [xi, xq, yi, yq] = this.indexes.map((i) =>
      columnValues(batch.getChildAt(i) as Vector, batch.schema.fields[i].name, this.row, this.file),
    );
    this.row += batch.numRows;
    return {
      domain: 'channels',
      xi,
      xq,
      yi,
      yq,
      sampleRate: this.rate,
      samplesPerSymbol: this.options.samplesPerSymbol ?? Number.NaN,
    };
  }

  finish(): void {
    if (this.row === 0) throw new InputError({ file: this.file }, 'data', 'at least one row', 'none');
  }
}

/** Bytes per synchronous read of an Arrow file. */
const CHUNK_BYTES = 1 << 22;
/** An IPC file starts with "ARROW1" padded to 8 bytes and ends with its footer, the footer's length (int32) and "ARROW1". */
const FILE_MAGIC = 'ARROW1';
const FILE_HEAD = 8;
const FILE_TAIL = 4 + FILE_MAGIC.length;
/** Arrow's MessageHeader value of a schema message. */
const SCHEMA_MESSAGE = 1;

/**
 * Opens an Arrow IPC file or stream for synchronous reading, record batch by
 * record batch, without holding the whole file: the bytes come in chunks
 * from the descriptor. apache-arrow's synchronous reader of the IPC file
 * format wants every byte in memory, so a file is read as the stream its
 * body is (the messages between the leading magic and the footer, ended by
 * the end-of-stream marker), with the schema taken from the footer when the
 * writer left it out of the body (apache-arrow's own file writer does).
 * `close` releases the file.
 * @throws InputError when the file cannot be opened or its bytes are not Arrow IPC
 */
function openSyncReader(path: string, what: string): { reader: RecordBatchReader; close: () => void } {
  const fd = openInput(path, what);
  let closed = false;
  const close = () => {
    if (!closed) closeSync(fd);
    closed = true;
  };
  const at = (position: number, length: number): Uint8Array => {
    const b = Buffer.allocUnsafe(Math.max(0, length));
    const n = readInput(fd, path, what, b, 0, b.length, position);
    return b.subarray(0, n);
  };
  try {
    const size = fstatSync(fd).size;
    const head = at(0, FILE_HEAD);
    const isFile = head.length === FILE_HEAD && Buffer.from(head).toString('latin1', 0, FILE_MAGIC.length) === FILE_MAGIC;
    let prefix: Uint8Array | null = null;
    if (isFile) {
      // The schema from the footer alone (magic + footer + length + magic), then the body's first message.
      const footerLength = Buffer.from(at(size - FILE_TAIL, 4)).readInt32LE(0);
      const footer = at(size - FILE_TAIL - footerLength, footerLength + FILE_TAIL);
      const tail = new Uint8Array(FILE_HEAD + footer.length);
      tail.set(head);
      tail.set(footer, FILE_HEAD);
      const schema = RecordBatchReader.from(tail).open().schema;
      const first = new MessageReader(at(FILE_HEAD, CHUNK_BYTES)).readMessage();
      if (first?.headerType !== SCHEMA_MESSAGE) {
        const w = new RecordBatchStreamWriter();
        w.reset(undefined, schema);
        prefix = w.toUint8Array(true);
      }
    }
    function* chunks(): Generator<Uint8Array> {
      if (prefix) yield prefix;
      for (let position = isFile ? FILE_HEAD : 0; ; ) {
        const chunk = at(position, CHUNK_BYTES);
        if (chunk.length === 0) return;
        position += chunk.length;
        yield chunk;
      }
    }
    const reader = RecordBatchReader.from(chunks());
    reader.open();
    return { reader, close };
  } catch (e) {
    close();
    if (e instanceof InputError) throw e;
    throw new InputError(
      { file: path },
      'Arrow IPC',
      'an Arrow IPC file or stream',
      `unreadable bytes (${(e as Error).message})`,
    );
  }
}

function* batchesOf(reader: RecordBatchReader, file: string): Generator<RecordBatch> {
  const it = reader[Symbol.iterator]();
  for (;;) {
    let step: IteratorResult<RecordBatch>;
    try {
      step = it.next();
    } catch (e) {
      throw new InputError({ file }, 'Arrow IPC', 'complete record batches', `a damaged file (${(e as Error).message})`);
    }
    if (step.done) return;
    yield step.value;
  }
}

/**
 * Reads an Arrow IPC capture (file or stream format, detected from the
 * bytes) batch by batch: float32 or float64 columns `xi, xq, yi, yq`
 * (case-insensitive, or mapped), one `channels` block per record batch.
 * Both this synchronous form and {@link readArrowCaptureAsync} hold one
 * batch at a time (plus a read chunk of 4 MB here), so memory follows the
 * writer's batch size, not the file's.
 * @throws InputError for a missing, duplicate or non-float column, a null
 *   (naming the column and the 1-based row), NaN or Infinity, no rows, no
 *   sample rate, or bytes that are not Arrow IPC
 * @example for (const block of readArrowCapture('run-07.arrow')) chain.process(block);
 */
export function* readArrowCapture(path: string, options: ArrowCaptureOptions = {}): Generator<ChannelBlock, void, undefined> {
  const { reader, close } = openSyncReader(path, 'capture');
  try {
    const blocks = new ArrowBlocks(path, options);
    for (const batch of batchesOf(reader, path)) yield blocks.block(batch);
    blocks.finish();
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    close();
  }
}

/**
 * The asynchronous form of {@link readArrowCapture}: reads with a file handle, one batch at a time.
 * @example for await (const block of readArrowCaptureAsync('run-07.arrows')) chain.process(block);
 */
export async function* readArrowCaptureAsync(
  path: string,
  options: ArrowCaptureOptions = {},
): AsyncGenerator<ChannelBlock, void, undefined> {
  const handle = await openInputAsync(path, 'capture');
  try {
    let reader: AsyncIterable<RecordBatch>;
    try {
      reader = (await RecordBatchReader.from(handle as never)) as unknown as AsyncIterable<RecordBatch>;
    } catch (e) {
      throw new InputError(
        { file: path },
        'Arrow IPC',
        'an Arrow IPC file or stream',
        `unreadable bytes (${(e as Error).message})`,
      );
    }
    const blocks = new ArrowBlocks(path, options);
    const it = reader[Symbol.asyncIterator]();
    for (;;) {
      let step: IteratorResult<RecordBatch>;
      try {
        step = await it.next();
      } catch (e) {
        throw new InputError({ file: path }, 'Arrow IPC', 'complete record batches', `a damaged file (${(e as Error).message})`);
      }
      if (step.done) break;
      yield blocks.block(step.value);
    }
    blocks.finish();
  } finally {
    await handle.close();
  }
}

/**
 * Loads a whole Arrow capture into one block. @throws InputError as {@link readArrowCapture}
 * @example const block = loadArrowCapture('run-07.arrow'); block.xi.length;
 */
export function loadArrowCapture(path: string, options: ArrowCaptureOptions = {}): ChannelBlock {
  return concatBlocks([...readArrowCapture(path, options)]);
}

/**
 * The schema metadata of an Arrow IPC file or stream (key → value text). The
 * descriptor fields may be stored there, each value as JSON text or as a
 * plain string (`"sampleRate": "8e10"`, `"modulation": "16qam"`).
 * @throws InputError when the bytes are not Arrow IPC
 * @example readArrowMetadata('run-07.arrow').get('symbolRate') // the text stored, e.g. '32e9'
 */
export function readArrowMetadata(path: string): ReadonlyMap<string, string> {
  const { reader, close } = openSyncReader(path, 'capture');
  try {
    return reader.schema.metadata;
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    close();
  }
}

/**
 * Loads reference symbols from Arrow IPC: float columns `x_re, x_im, y_re, y_im`.
 * @throws InputError as {@link readArrowCapture}, or for fewer than 32 symbols
 * @example const ref = loadReferenceArrow('tx-symbols.arrow'); ref.x.length / 2; // symbols
 */
export function loadReferenceArrow(path: string): DualPol {
  const { reader, close } = openSyncReader(path, 'reference');
  const parts: Float64Array[][] = [[], [], [], []];
  let indexes: number[] | null = null;
  let row = 0;
  try {
    for (const batch of batchesOf(reader, path)) {
      indexes ??= columnIndexes(batch.schema, REFERENCE_COLUMNS, path);
      // Checked before the batch is copied, so that a huge file is refused before it fills the memory.
      if (row + batch.numRows > LIMITS.maxReferenceSymbols)
        throw new InputError(
          { file: path },
          'reference',
          `at most ${LIMITS.maxReferenceSymbols} symbols`,
          `more (${row + batch.numRows} rows so far)`,
        );
      for (const [s, i] of indexes.entries())
        parts[s].push(columnValues(batch.getChildAt(i) as Vector, REFERENCE_COLUMNS[s], row, path));
      row += batch.numRows;
    }
    if (indexes === null) columnIndexes(reader.schema, REFERENCE_COLUMNS, path);
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    close();
  }
  const joined = parts.map((p) => {
    const out = new Float64Array(row);
    let at = 0;
    for (const a of p) {
      out.set(a, at);
      at += a.length;
    }
    return out;
  });
  const symbols = dualPolFromColumns(joined[0], joined[1], joined[2], joined[3]);
  checkReferenceLength(symbols, path);
  return symbols;
}

/** The end-of-stream marker of the Arrow IPC stream format: the continuation 0xFFFFFFFF and a zero length. */
const END_OF_STREAM = [0xff, 0xff, 0xff, 0xff, 0, 0, 0, 0];

/**
 * Whether an Arrow IPC stream ends with its end-of-stream marker. A stream
 * cut exactly between two record batches reads without an error, one batch
 * short; the marker's absence is the only sign of it. (Every writer of the
 * format writes the marker when it closes the stream; the IPC file format
 * ends with a footer instead, and a cut file fails to open.)
 * @returns true for an IPC file, or for a stream ending with the marker
 * @throws InputError when the file cannot be read
 * @example if (!arrowStreamComplete('run-07.arrows')) console.warn('run-07.arrows may have been cut short');
 */
export function arrowStreamComplete(path: string): boolean {
  const fd = openInput(path, 'capture');
  try {
    const size = fstatSync(fd).size;
    const head = new Uint8Array(FILE_MAGIC.length);
    readInput(fd, path, 'capture', head, 0, head.length, 0);
    if (Buffer.from(head).toString('latin1') === FILE_MAGIC) return true;
    if (size < END_OF_STREAM.length) return false;
    const tail = new Uint8Array(END_OF_STREAM.length);
    readInput(fd, path, 'capture', tail, 0, tail.length, size - tail.length);
    return END_OF_STREAM.every((b, i) => tail[i] === b);
  } finally {
    closeSync(fd);
  }
}
