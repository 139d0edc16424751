import { closeSync } from 'node:fs';
import { CHANNEL_NAMES, type ChannelBlock, type ChannelName, concatBlocks } from '@intradyne/core';
import { inputFailure } from '../errors/file-system.js';
import { InputError, withLinkTarget } from '../errors/input-error.js';
import { BufferFeeder, type HeaderCell, listColumns, NumericCsvTable, type TableBlock } from './csv-table.js';
import { linkTarget, openInput, openInputAsync, readInput } from './open-file.js';
import { SAMPLE_RATE_TOLERANCE, TimeAxis } from './time-axis.js';

/** Samples per block of the CSV capture readers when the options name none: 65,536 (2 MiB of channel data). */
export const CSV_BLOCK_ROWS = 65536;

/** Column names of a capture CSV: the four channels and the time column. */
export type CaptureColumn = ChannelName | 't';

/** Options of the CSV capture readers ({@link readCsvCapture}, {@link loadCsvCapture}). */
export interface CsvCaptureOptions {
  /**
   * Header names of the columns (case-insensitive), e.g. `{ xi: 'CH1', xq: 'CH2', yi: 'CH3', yq: 'CH4', t: 'Time' }`;
   * by default the column names themselves.
   */
  readonly columns?: Partial<Record<CaptureColumn, string>>;
  /** Sample rate, Sa/s: required without a time column, checked against it otherwise. */
  readonly sampleRate?: number;
  /** Nominal samples per symbol carried by the blocks (default NaN: not known). */
  readonly samplesPerSymbol?: number;
  /** Samples per block (default 65536: 2 MiB of channel data per block). */
  readonly blockSize?: number;
  /** Field separator (default ','). */
  readonly delimiter?: string;
  /** Read buffer, bytes (default 1 MiB); also the longest line accepted. */
  readonly bufferBytes?: number;
}

/** One file per channel: the path of each. */
export type ChannelFiles = Readonly<Record<ChannelName, string>>;

type ReadFn = (buffer: Uint8Array, offset: number, length: number) => number;

/** Resolves the header of a four-channel file: slots 0–3 the channels, 4 the time column. */
function captureResolver(file: string, options: CsvCaptureOptions, wanted: readonly ChannelName[]) {
  return (cells: readonly HeaderCell[], line: number): Int32Array => {
    const names = [...wanted, 't' as const];
    const slots = new Int32Array(cells.length).fill(-1);
    const found = new Int32Array(names.length).fill(-1);
    names.forEach((slotName, s) => {
      const name = (options.columns?.[slotName] ?? slotName).toLowerCase();
      for (const c of cells) {
        if (c.name.toLowerCase() !== name) continue;
        if (found[s] >= 0) {
          throw new InputError(
            { file, line, column: c.column },
            `column '${c.name}' (field ${c.field})`,
            `one column named '${name}' (case-insensitive)`,
            `a second one (the first is field ${found[s] + 1})`,
          );
        }
        found[s] = c.field - 1;
        slots[c.field - 1] = s;
      }
    });
    // One file per channel: a file with a single column besides the time is that channel.
    if (wanted.length === 1 && found[0] < 0 && options.columns?.[wanted[0]] === undefined) {
      const others = cells.filter((c) => c.field - 1 !== found[1]);
      if (others.length === 1) {
        found[0] = others[0].field - 1;
        slots[found[0]] = 0;
      }
    }
    wanted.forEach((slotName, s) => {
      if (found[s] < 0) {
        const name = options.columns?.[slotName] ?? slotName;
        throw new InputError(
          { file, line, column: 1 },
          'header',
          `a column named '${name}' (case-insensitive${options.columns?.[slotName] ? `, mapped to ${slotName}` : ''})`,
          listColumns(cells),
        );
      }
    });
    if (found[wanted.length] < 0 && options.sampleRate === undefined) {
      throw new InputError(
        { file, line, column: 1 },
        'sample rate',
        `a time column '${options.columns?.t ?? 't'}' (seconds) or a stated sample rate (the descriptor's sampleRate)`,
        'neither',
      );
    }
    return slots;
  };
}

/** A block of the wanted channels, with the sample rate (Sa/s). */
interface TimedBlock {
  readonly slots: readonly Float64Array[];
  readonly rows: number;
  readonly sampleRate: number;
  /** The table's block it came from (for `recycle`). */
  readonly source?: TableBlock;
}

/**
 * Checks the options of the CSV capture readers.
 * @throws RangeError for a sample rate that is not a positive number, or a block size that is not a positive integer
 * @example checkCsvCaptureOptions({ sampleRate: 80e9, blockSize: 65536 });
 */
export function checkCsvCaptureOptions(options: CsvCaptureOptions): void {
  const { sampleRate, blockSize } = options;
  if (sampleRate !== undefined && !(Number.isFinite(sampleRate) && sampleRate > 0)) {
    throw new RangeError(`csv capture: sampleRate expected a positive number of Sa/s, received ${sampleRate}`);
  }
  if (blockSize !== undefined && !(Number.isInteger(blockSize) && blockSize > 0)) {
    throw new RangeError(`csv capture: blockSize expected a positive integer, received ${blockSize}`);
  }
}

/**
 * The state machine under every CSV capture reader: a table read through one
 * buffer, the time column checked as it streams, and blocks released once
 * the sample rate is known (blocks wait for the first 1001 time stamps).
 * The caller reads into `feeder`, calls `feed`, then `take`s what is ready.
 */
class CaptureCsvState {
  readonly feeder: BufferFeeder;
  private readonly table: NumericCsvTable;
  private readonly axis: TimeAxis;
  private readonly queue: TableBlock[] = [];
  private readonly timeSlot: number;
  private timed: boolean | undefined;
  private checked = 0;
  private rate = Number.NaN;
  ended = false;

  constructor(
    file: string,
    private readonly options: CsvCaptureOptions,
    wanted: readonly ChannelName[],
  ) {
    checkCsvCaptureOptions(options);
    this.timeSlot = wanted.length;
    this.axis = new TimeAxis(file, options.columns?.t ?? 't', options.sampleRate);
    this.table = new NumericCsvTable(file, captureResolver(file, options, wanted), (b) => this.queue.push(b), {
      delimiter: options.delimiter,
      blockRows: options.blockSize ?? CSV_BLOCK_ROWS,
    });
    this.feeder = new BufferFeeder(this.table, file, options.bufferBytes ?? 1 << 20);
  }

  /** Consumes `n` bytes read into the feeder (0 at the end of the file). */
  feed(n: number): void {
    const more = this.feeder.feed(n);
    if (this.timed === undefined && this.table.header.length > 0) {
      const name = (this.options.columns?.t ?? 't').toLowerCase();
      this.timed = this.table.header.some((h) => h.toLowerCase() === name);
    }
    if (this.timed) {
      for (; this.checked < this.queue.length; this.checked++) {
        const b = this.queue[this.checked];
        this.axis.push(b.slots[this.timeSlot], b.lines, b.rows);
      }
    }
    if (!more) {
      this.ended = true;
      this.rate = this.timed ? this.axis.finish() : (this.options.sampleRate as number);
    } else if (!this.timed) this.rate = this.options.sampleRate as number;
    else if (this.axis.known) this.rate = this.axis.sampleRate;
    if (this.options.sampleRate !== undefined) this.rate = this.options.sampleRate;
  }

  /** The blocks ready to go (all of them once the rate is known). */
  take(): TimedBlock[] {
    if (!(this.rate > 0)) return [];
    const out = this.queue
      .splice(0)
      .map((b) => ({ slots: b.slots.slice(0, this.timeSlot), rows: b.rows, sampleRate: this.rate, source: b }));
    this.checked = 0;
    return out;
  }

  /** Gives a taken block's arrays back to the table, to be filled again (see `NumericCsvTable.recycle`). */
  recycle(b: TimedBlock): void {
    if (b.source) this.table.recycle(b.source);
  }
}

function channelBlock(b: TimedBlock, options: CsvCaptureOptions): ChannelBlock {
  return {
    domain: 'channels',
    xi: b.slots[0],
    xq: b.slots[1],
    yi: b.slots[2],
    yq: b.slots[3],
    sampleRate: b.sampleRate,
    samplesPerSymbol: options.samplesPerSymbol ?? Number.NaN,
  };
}

/** The blocks of a state fed by `read`; with `reuse`, a block's arrays are filled again once the caller asks for the next. */
function* syncBlocks(state: CaptureCsvState, read: ReadFn, reuse = false): Generator<TimedBlock, void, undefined> {
  while (!state.ended) {
    const f = state.feeder;
    state.feed(read(f.buffer, f.offset, f.room));
    for (const b of state.take()) {
      yield b;
      if (reuse) state.recycle(b);
    }
  }
}

function* captureBlocks(
  file: string,
  read: ReadFn,
  options: CsvCaptureOptions,
  reuse = false,
): Generator<ChannelBlock, void, undefined> {
  for (const b of syncBlocks(new CaptureCsvState(file, options, CHANNEL_NAMES), read, reuse)) yield channelBlock(b, options);
}

/**
 * Reads a capture CSV file in blocks, in bounded memory: one read buffer
 * (`bufferBytes`, 1 MiB by default) and the blocks not yet consumed. Lines
 * starting with `#` are comments, blank lines are skipped, then a header row
 * names the columns: `xi, xq, yi, yq` (case-insensitive, any order, or
 * mapped with `columns`), an optional time column `t` in seconds, other
 * columns ignored. The sample rate comes from `sampleRate` or from the time
 * column (its steps must agree within {@link TIME_STEP_TOLERANCE}, a stated
 * rate with the inferred one within {@link SAMPLE_RATE_TOLERANCE}).
 *
 * @param path the CSV file
 * @returns a generator of `channels` blocks of `blockSize` samples (the last one shorter)
 * @throws InputError naming the file, line and column for every problem of the file
 * @throws RangeError for bad options
 * @example for (const block of readCsvCapture('run-07.csv', { sampleRate: 80e9 })) total += block.xi.length;
 */
export function* readCsvCapture(path: string, options: CsvCaptureOptions = {}): Generator<ChannelBlock, void, undefined> {
  yield* readFileBlocks(path, options, false);
}

/**
 * {@link readCsvCapture} for a caller that copies each block before asking for the
 * next: the block's arrays are then filled again, so reading allocates nothing per
 * block (the parsing thread of `readCaptureCsvAhead`, whose garbage would otherwise
 * wait for its own collector).
 * @throws InputError as {@link readCsvCapture}
 * @example for (const b of readCsvCaptureReusing('run-07.csv', { sampleRate: 80e9 })) ring.set(b.xi, at);
 */
export function* readCsvCaptureReusing(path: string, options: CsvCaptureOptions = {}): Generator<ChannelBlock, void, undefined> {
  yield* readFileBlocks(path, options, true);
}

function* readFileBlocks(path: string, options: CsvCaptureOptions, reuse: boolean): Generator<ChannelBlock, void, undefined> {
  const fd = openInput(path, 'capture');
  try {
    yield* captureBlocks(path, (b, o, l) => readInput(fd, path, 'capture', b, o, l, null), options, reuse);
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    closeSync(fd);
  }
}

/**
 * Reads a capture CSV held in memory (same format and errors as {@link readCsvCapture});
 * `name` stands for the file in messages.
 * @example for (const block of readCsvCaptureBytes(bytes, 'upload.csv', { sampleRate: 80e9 })) chain.process(block);
 */
export function* readCsvCaptureBytes(
  bytes: Uint8Array,
  name: string,
  options: CsvCaptureOptions = {},
): Generator<ChannelBlock, void, undefined> {
  let at = 0;
  yield* captureBlocks(
    name,
    (b, o, l) => {
      const n = Math.min(l, bytes.length - at);
      b.set(bytes.subarray(at, at + n), o);
      at += n;
      return n;
    },
    options,
  );
}

/**
 * The asynchronous form of {@link readCsvCapture} (reads with a file handle;
 * same blocks, same errors).
 * @example for await (const block of readCsvCaptureAsync('run-07.csv', { sampleRate: 80e9 })) chain.process(block);
 */
export async function* readCsvCaptureAsync(
  path: string,
  options: CsvCaptureOptions = {},
): AsyncGenerator<ChannelBlock, void, undefined> {
  const handle = await openInputAsync(path, 'capture');
  try {
    const state = new CaptureCsvState(path, options, CHANNEL_NAMES);
    while (!state.ended) {
      const f = state.feeder;
      let bytesRead: number;
      try {
        ({ bytesRead } = await handle.read(f.buffer, f.offset, f.room, null));
      } catch (e) {
        throw inputFailure(e, path, 'capture', 'a readable file');
      }
      state.feed(bytesRead);
      for (const b of state.take()) yield channelBlock(b, options);
    }
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    await handle.close();
  }
}

/**
 * Reads one file per channel, in lockstep: each file has a header with the
 * channel's column (its name, its mapped name, or the only column besides
 * the time column) and an optional time column. The files must have the
 * same number of rows and agree on the sample rate.
 * @throws InputError for any problem of a file, or when the files differ in length or rate
 * @example readCsvCaptureFiles({ xi: 'ch1.csv', xq: 'ch2.csv', yi: 'ch3.csv', yq: 'ch4.csv' }, { sampleRate: 80e9 })
 */
export function* readCsvCaptureFiles(
  files: ChannelFiles,
  options: CsvCaptureOptions = {},
): Generator<ChannelBlock, void, undefined> {
  const fds: number[] = [];
  try {
    for (const c of CHANNEL_NAMES) fds.push(openInput(files[c], `channel ${c}`));
    const sources = CHANNEL_NAMES.map((c, i) =>
      syncBlocks(new CaptureCsvState(files[c], options, [c]), (b, o, l) =>
        readInput(fds[i], files[c], `channel ${c}`, b, o, l, null),
      ),
    );
    let rows = 0;
    for (;;) {
      const steps = sources.map((s) => s.next());
      const first = steps[0];
      CHANNEL_NAMES.forEach((c, i) => {
        const step = steps[i];
        const n = step.done ? 0 : step.value.rows;
        const n0 = first.done ? 0 : first.value.rows;
        if (n !== n0) {
          throw new InputError(
            { file: files[c] },
            'rows',
            `as many rows as ${files.xi}`,
            `${rows + n} rows against ${rows + n0}`,
          );
        }
        if (!step.done && !first.done && Math.abs(step.value.sampleRate / first.value.sampleRate - 1) > SAMPLE_RATE_TOLERANCE) {
          throw new InputError(
            { file: files[c] },
            'sample rate',
            `the rate of ${files.xi} (${first.value.sampleRate} Sa/s)`,
            `${step.value.sampleRate} Sa/s`,
          );
        }
      });
      if (first.done) break;
      rows += first.value.rows;
      const parts = steps.map((s) => s.value as TimedBlock);
      yield channelBlock(
        { slots: parts.map((p) => p.slots[0]), rows: first.value.rows, sampleRate: first.value.sampleRate },
        options,
      );
    }
  } finally {
    for (const fd of fds) closeSync(fd);
  }
}

/**
 * Loads a whole capture CSV into one block (memory: the capture itself).
 * @throws InputError as {@link readCsvCapture}
 * @example const block = loadCsvCapture('run-07.csv', { sampleRate: 80e9, columns: { xi: 'CH1', xq: 'CH2', yi: 'CH3', yq: 'CH4' } });
 */
export function loadCsvCapture(path: string, options: CsvCaptureOptions = {}): ChannelBlock {
  return concatBlocks([...readCsvCapture(path, options)]);
}
