import { MessageChannel, Worker } from 'node:worker_threads';
import type { ChannelBlock } from '@intradyne/core';
import { builtModule } from '../threads/built-module.js';
import { receiveCounted } from '../threads/hand-over.js';
import { fromThreadError } from '../threads/thread-error.js';
import { CSV_BLOCK_ROWS, type CsvCaptureOptions, checkCsvCaptureOptions, readCsvCapture } from './csv-capture.js';
import { PARSE_AHEAD_BLOCKS, type ParseAheadData, type ParseAheadMessage, POSTED, STOP, TAKEN } from './parse-ahead-protocol.js';

/**
 * Largest block parsed ahead: 2^20 rows (the ring then holds 100 MB). Larger blocks are
 * read on the caller's thread, whose reader holds one block at a time.
 */
export const MAX_AHEAD_BLOCK_ROWS = 1 << 20;

/**
 * {@link readCsvCapture} with the parsing on a worker thread: the same blocks (bit for
 * bit, same sizes) and the same errors (an InputError with its file, line and column),
 * while the caller works on the previous block. The hand-over is synchronous, so a
 * synchronous consumer (the analysis) overlaps its work with the parse without becoming
 * asynchronous: the caller waits on a shared counter only when the parse is behind. At
 * most {@link PARSE_AHEAD_BLOCKS} blocks wait. Stopping early (a `break`, an error in the
 * caller) stops the thread. Blocks of more than {@link MAX_AHEAD_BLOCK_ROWS} rows are
 * read on this thread.
 * @throws InputError as {@link readCsvCapture}
 * @example for (const block of readCaptureCsvAhead('run-07.csv', { sampleRate: 80e9 })) chain.process(block);
 */
export function* readCaptureCsvAhead(path: string, options: CsvCaptureOptions = {}): Generator<ChannelBlock, void, undefined> {
  checkCsvCaptureOptions(options);
  const blockRows = options.blockSize ?? CSV_BLOCK_ROWS;
  if (blockRows > MAX_AHEAD_BLOCK_ROWS) {
    yield* readCsvCapture(path, options);
    return;
  }
  const counters = new Int32Array(new SharedArrayBuffer(3 * Int32Array.BYTES_PER_ELEMENT));
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
      const m = receiveCounted(port1, counters, POSTED, received++) as ParseAheadMessage;
      if (m.kind === 'end') return;
      if (m.kind === 'error') throw fromThreadError(m.error);
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
