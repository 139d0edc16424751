import { littleEndianBytes, Sha256 } from '../hash/sha256.js';
import type { ChannelBlock, FieldBlock } from '../pipeline/blocks.js';
import type { Stage, StageRecord } from '../pipeline/stage.js';

/** An incremental SHA-256 of the input samples (core's {@link Sha256}, or a native one the caller has). */
export interface InputHasher {
  /** Adds bytes to the message. */
  update(bytes: Uint8Array): unknown;
  /** The digest as 64 lower-case hex digits. */
  hex(): string;
}

/** What running a receiver over a whole capture gave, beside the symbols it handed out. */
export interface ReceiverRun<D> {
  /** Input samples per channel. */
  readonly samples: number;
  /** Recovered symbols per polarization. */
  readonly symbols: number;
  /** SHA-256 of the input samples, rows (xi, xq, yi, yq) as little-endian float64. */
  readonly inputSha256: string;
  /** What every stage reported at the end. */
  readonly diagnostics: D;
  /** The receiver with every option of every stage. */
  readonly pipeline: StageRecord;
}

/** Options of {@link runReceiver}. */
export interface RunReceiverOptions {
  /** The hasher of the input samples (default core's {@link Sha256}); the digest must be the same. */
  readonly hasher?: () => InputHasher;
  /** Called with each input block before the receiver takes it (to estimate its spectrum…). */
  readonly onInput?: (block: ChannelBlock) => void;
}

/**
 * Runs a receiver over a whole capture: each block through it in order, then
 * its flush, handing every block of recovered symbols to `onSymbols` as it
 * comes (memory stays flat with the capture), while the input is hashed for
 * the reproducibility record. Measuring the symbols is the caller's.
 * @param blocks the capture, in blocks of any sizes
 * @param onSymbols called with each block of recovered symbols, in order
 * @example const run = runReceiver(blocks, defaultReceiver(settings), (b) => stream.add(b));
 */
export function runReceiver<D>(
  blocks: Iterable<ChannelBlock>,
  receiver: Stage<'channels', 'symbols', D>,
  onSymbols: (block: FieldBlock<'symbols'>) => void,
  options: RunReceiverOptions = {},
): ReceiverRun<D> {
  const hasher: InputHasher = options.hasher?.() ?? new Sha256();
  let samples = 0;
  let symbols = 0;
  const deliver = (b: FieldBlock<'symbols'>) => {
    symbols += b.x.length >> 1;
    onSymbols(b);
  };
  for (const block of blocks) {
    hashRows(hasher, block);
    samples += block.xi.length;
    options.onInput?.(block);
    deliver(receiver.process(block));
  }
  const tail = receiver.flush();
  if (tail) deliver(tail);
  return { samples, symbols, inputSha256: hasher.hex(), diagnostics: receiver.diagnostics(), pipeline: receiver.describe() };
}

/** Hashes a block as rows (xi, xq, yi, yq) of little-endian float64, so that the digest does not depend on block boundaries. */
function hashRows(h: InputHasher, b: ChannelBlock): void {
  const n = b.xi.length;
  const rows = new Float64Array(4 * n);
  for (let k = 0; k < n; k++) {
    rows[4 * k] = b.xi[k];
    rows[4 * k + 1] = b.xq[k];
    rows[4 * k + 2] = b.yi[k];
    rows[4 * k + 3] = b.yq[k];
  }
  h.update(littleEndianBytes(rows));
}
