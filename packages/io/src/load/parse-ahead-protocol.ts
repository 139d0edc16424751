import type { MessagePort } from 'node:worker_threads';
import type { ThreadError } from '../threads/thread-error.js';
import type { CsvCaptureOptions } from './csv-capture.js';

/**
 * Blocks the parsing thread may hold ready before the reader takes them: 3 (6 MiB of
 * samples at the default block size). Enough to keep the parse ahead of a reader that
 * takes blocks unevenly; a bound, so memory does not grow with the file.
 */
export const PARSE_AHEAD_BLOCKS = 3;

/** Slots of the shared counters: messages posted (blocks, the end or an error), blocks taken, stop asked. */
export const POSTED = 0;
export const TAKEN = 1;
export const STOP = 2;

/** What the parsing thread posts: a block (its samples are in the shared ring), the end, or the error that ended the parse. */
export type ParseAheadMessage =
  | { readonly kind: 'block'; readonly rows: number; readonly sampleRate: number; readonly samplesPerSymbol: number }
  | { readonly kind: 'end' }
  | { readonly kind: 'error'; readonly error: ThreadError };

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
