import { type ChannelBlock, concatBlocks, sliceBlock } from '../pipeline/blocks.js';

/**
 * Holds the first `span` samples of a channel stream back until they have
 * all arrived, so that statistics can be estimated on exactly those samples
 * whatever the block sizes; afterwards blocks pass straight through.
 * Internal helper of the front-end stages.
 */
export class LeadingSpan {
  private held: ChannelBlock[] = [];
  private count = 0;
  private done = false;

  constructor(private readonly span: number) {}

  /** True once the statistics have been estimated. */
  get ready(): boolean {
    return this.done;
  }

  /**
   * Adds a block. Returns null while the span is filling; once it is full,
   * returns everything held so far (the span and what came after it in the
   * same block), with `calibration` the first `span` samples.
   */
  push(block: ChannelBlock): { all: ChannelBlock; calibration: ChannelBlock } | null {
    if (this.done) return { all: block, calibration: block };
    this.held.push(block);
    this.count += block.xi.length;
    if (this.count < this.span) return null;
    return this.release();
  }

  /** Ends the stream: releases what is held, even when the span is not full (null when nothing is held). */
  finish(): { all: ChannelBlock; calibration: ChannelBlock } | null {
    if (this.done || this.held.length === 0) return null;
    return this.release();
  }

  reset(): void {
    this.held = [];
    this.count = 0;
    this.done = false;
  }

  private release(): { all: ChannelBlock; calibration: ChannelBlock } {
    const all = concatBlocks(this.held);
    this.held = [];
    this.done = true;
    const n = Math.min(this.span, all.xi.length);
    return { all, calibration: n === all.xi.length ? all : sliceBlock(all, 0, n) };
  }
}
