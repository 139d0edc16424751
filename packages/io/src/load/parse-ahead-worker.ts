/**
 * Entry of the thread that parses a CSV capture ahead of its reader
 * (see `readCaptureCsvAhead`). It loads only the loader, not the analysis.
 */
import { workerData } from 'node:worker_threads';
import { postCounted } from '../threads/hand-over.js';
import { toThreadError } from '../threads/thread-error.js';
import { readCsvCaptureReusing } from './csv-capture.js';
import { PARSE_AHEAD_BLOCKS, type ParseAheadData, type ParseAheadMessage, POSTED, STOP, TAKEN } from './parse-ahead-protocol.js';

/**
 * The parsing thread's work: reads the file (reusing the table's arrays, as each block
 * is copied into the ring at once) and posts each block, waiting while {@link PARSE_AHEAD_BLOCKS}
 * are untaken; posts the end, or the error that stopped it. Every error is caught and
 * posted, so the reader always gets a last message.
 */
function parseAhead({ path, options, counters, ring, blockRows, port }: ParseAheadData): void {
  const post = (m: ParseAheadMessage) => postCounted(port, counters, POSTED, m);
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
    post({ kind: 'error', error: toThreadError(e) });
  } finally {
    port.close();
  }
}

parseAhead(workerData as ParseAheadData);
