import { type AnyBlock, blockLength, concatBlocks, sliceBlock } from './blocks.js';

/**
 * Holds the first `span` samples of a stream back until they have all
 * arrived, so that a stage can estimate on exactly those samples whatever the
 * block sizes; afterwards blocks pass straight through. The shared shape of
 * the "estimate on the start, then apply to all" stages (normalization, IQ
 * orthogonalization, coarse frequency offset).
 */
export class LeadingSpan<B extends AnyBlock> {
  private held: B[] = [];
  private count = 0;
  private done = false;

  constructor(private readonly span: number) {}

  /** True once the span has been released. */
  get ready(): boolean {
    return this.done;
  }

  /**
   * Adds a block. Returns null while the span is filling; once it is full,
   * returns everything held so far (the span and what came after it in the
   * same block), with `calibration` the first `span` samples.
   */
  push(block: B): { all: B; calibration: B } | null {
    if (this.done) return { all: block, calibration: block };
    this.held.push(block);
    this.count += blockLength(block);
    if (this.count < this.span) return null;
    return this.release();
  }

  /** Ends the stream: releases what is held, even when the span is not full (null when nothing is held). */
  finish(): { all: B; calibration: B } | null {
    if (this.done || this.held.length === 0) return null;
    return this.release();
  }

  reset(): void {
    this.held = [];
    this.count = 0;
    this.done = false;
  }

  private release(): { all: B; calibration: B } {
    const all = concatBlocks(this.held);
    this.held = [];
    this.done = true;
    const total = blockLength(all);
    const n = Math.min(this.span, total);
    return { all, calibration: n === total ? all : sliceBlock(all, 0, n) };
  }
}
