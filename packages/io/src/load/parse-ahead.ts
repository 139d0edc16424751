import { statSync } from 'node:fs';
import { MessageChannel, type MessagePort, receiveMessageOnPort, Worker } from 'node:worker_threads';
import type { ChannelBlock } from '@intradyne/core';
import { builtModule } from '../built-module.js';
import { InputError, type InputLocation } from '../errors/input-error.js';
import { type CsvCaptureOptions, readCsvCapture, readCsvCaptureReusing } from './csv-capture.js';

/**
 * Smallest CSV capture parsed on a worker thread by {@link readCaptureCsvAhead}: 32 MB
 * (about 160,000 dual-polarization symbols at 2.5 samples per symbol). Starting the
 * thread and loading the package in it costs about 60 ms of CPU, which a smaller file's
 * parse (about 150 ms at 200 MB/s) does not win back on a machine whose cores are busy.
 */
export const PARSE_AHEAD_BYTES = 32 << 20;

/**
 * Blocks the parsing thread may hold ready before the reader takes them: 3 (6 MiB of
 * samples at the default block size). Enough to keep the parse ahead of a reader that
 * takes blocks unevenly; a bound, so memory does not grow with the file.
 */
export const PARSE_AHEAD_BLOCKS = 3;

/** Slots of the shared counters: blocks posted (and the end), blocks taken, stop asked. */
const POSTED = 0;
/** The CSV reader's block when the options name none (see `CsvCaptureOptions.blockSize`). */
const DEFAULT_BLOCK_ROWS = 65536;
const TAKEN = 1;
const STOP = 2;

/** What the parsing thread posts: a block (its samples are in the shared ring), the end, or the error that ended the parse. */
export type ParseAheadMessage =
  | { readonly kind: 'block'; readonly rows: number; readonly sampleRate: number; readonly samplesPerSymbol: number }
  | { readonly kind: 'end' }
  | { readonly kind: 'error'; readonly error: SerializedError };

/** An error carried across threads: an InputError's fields, or a name and message. */
export type SerializedError =
  | {
      readonly name: 'InputError';
      readonly where: InputLocation;
      readonly what: string;
      readonly expected: string;
      readonly received: string;
    }
  | { readonly name: string; readonly message: string };

/** What the parsing thread is given. */
export interface ParseAheadData {
  readonly path: string;
  readonly options: CsvCaptureOptions;
  readonly counters: Int32Array;
  /** {@link PARSE_AHEAD_BLOCKS} slots of four channels of `blockRows` samples each, written by the thread. */
  readonly ring: Float64Array;
  readonly blockRows: number;
  readonly port: MessagePort;
}

/**
 * Whether {@link readCaptureCsvAhead} is worth its thread for this file: at least
 * {@link PARSE_AHEAD_BYTES}. A file that cannot be stat-ed is read on this thread, which
 * reports the problem as it always does.
 */
export function worthParsingAhead(path: string): boolean {
  try {
    return statSync(path).size >= PARSE_AHEAD_BYTES;
  } catch {
    return false;
  }
}

/**
 * {@link readCsvCapture} with the parsing on a worker thread: the same blocks (bit for
 * bit, same sizes) and the same errors (an InputError with its file, line and column),
 * while the caller works on the previous block. The hand-over is synchronous, so a
 * synchronous consumer (the analysis) overlaps its work with the parse without becoming
 * asynchronous: the caller waits on a shared counter only when the parse is behind. At
 * most {@link PARSE_AHEAD_BLOCKS} blocks wait. Stopping early (a `break`, an error in the
 * caller) stops the thread.
 * @throws InputError as {@link readCsvCapture}
 * @example for (const block of readCaptureCsvAhead('run-07.csv', { sampleRate: 80e9 })) chain.process(block);
 */
export function* readCaptureCsvAhead(path: string, options: CsvCaptureOptions = {}): Generator<ChannelBlock, void, undefined> {
  const counters = new Int32Array(new SharedArrayBuffer(3 * Int32Array.BYTES_PER_ELEMENT));
  const blockRows = options.blockSize ?? DEFAULT_BLOCK_ROWS;
  const ring = new Float64Array(new SharedArrayBuffer(PARSE_AHEAD_BLOCKS * 4 * blockRows * Float64Array.BYTES_PER_ELEMENT));
  const { port1, port2 } = new MessageChannel();
  const data: ParseAheadData = { path, options, counters, ring, blockRows, port: port2 };
  const worker = new Worker(builtModule('load/parse-ahead-worker.js'), {
    workerData: data,
    transferList: [port2],
    // The parse makes little garbage (the table's arrays are reused): a small young generation keeps the thread small.
    resourceLimits: { maxYoungGenerationSizeMb: 2 },
  });
  worker.unref();
  let received = 0;
  try {
    for (;;) {
      let next = receiveMessageOnPort(port1);
      while (next === undefined) {
        // The thread posts first and counts after, so a count ahead of ours means a message is there.
        Atomics.wait(counters, POSTED, received);
        next = receiveMessageOnPort(port1);
      }
      received++;
      const m = next.message as ParseAheadMessage;
      if (m.kind === 'end') return;
      if (m.kind === 'error') throw deserializeError(m.error);
      // Copied out of the ring on this thread: the blocks may be held downstream, and memory freed
      // by the thread that allocated it keeps the process small (one malloc arena per thread).
      const at = ((received - 1) % PARSE_AHEAD_BLOCKS) * 4 * blockRows;
      const channel = (c: number) => ring.slice(at + c * blockRows, at + c * blockRows + m.rows);
      const block: ChannelBlock = {
        domain: 'channels',
        xi: channel(0),
        xq: channel(1),
        yi: channel(2),
        yq: channel(3),
        sampleRate: m.sampleRate,
        samplesPerSymbol: m.samplesPerSymbol,
      };
      Atomics.add(counters, TAKEN, 1);
      Atomics.notify(counters, TAKEN);
      yield block;
    }
  } finally {
    Atomics.store(counters, STOP, 1);
    Atomics.notify(counters, TAKEN);
    port1.close();
    void worker.terminate();
  }
}

/**
 * The parsing thread's work (the body of `parse-ahead-worker.js`): reads the file with
 * {@link readCsvCapture} and posts each block, waiting while {@link PARSE_AHEAD_BLOCKS}
 * are untaken; posts the end, or the error that stopped it. Every error is caught and
 * posted, so the reader always gets a last message.
 */
export function parseAhead({ path, options, counters, ring, blockRows, port }: ParseAheadData): void {
  const post = (m: ParseAheadMessage) => {
    port.postMessage(m);
    Atomics.add(counters, POSTED, 1);
    Atomics.notify(counters, POSTED);
  };
  try {
    let posted = 0;
    for (const b of readCsvCaptureReusing(path, options)) {
      for (;;) {
        if (Atomics.load(counters, STOP) !== 0) return;
        const taken = Atomics.load(counters, TAKEN);
        if (posted - taken < PARSE_AHEAD_BLOCKS) break;
        Atomics.wait(counters, TAKEN, taken);
      }
      const at = (posted % PARSE_AHEAD_BLOCKS) * 4 * blockRows;
      ring.set(b.xi, at);
      ring.set(b.xq, at + blockRows);
      ring.set(b.yi, at + 2 * blockRows);
      ring.set(b.yq, at + 3 * blockRows);
      post({ kind: 'block', rows: b.xi.length, sampleRate: b.sampleRate, samplesPerSymbol: b.samplesPerSymbol });
      posted++;
    }
    post({ kind: 'end' });
  } catch (e) {
    post({ kind: 'error', error: serializeError(e) });
  } finally {
    port.close();
  }
}

function serializeError(e: unknown): SerializedError {
  if (e instanceof InputError) {
    const where = { file: e.file, line: e.line, column: e.column, linkTarget: e.linkTarget };
    return { name: 'InputError', where, what: e.what, expected: e.expected, received: e.received };
  }
  if (e instanceof Error) return { name: e.name, message: e.message };
  return { name: 'Error', message: String(e) };
}

function deserializeError(e: SerializedError): Error {
  if ('where' in e) return new InputError(e.where, e.what, e.expected, e.received);
  if (e.name === 'RangeError') return new RangeError(e.message);
  if (e.name === 'TypeError') return new TypeError(e.message);
  const out = new Error(e.message);
  out.name = e.name;
  return out;
}
