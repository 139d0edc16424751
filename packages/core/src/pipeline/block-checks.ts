import type { AnyBlock, Domain } from './blocks.js';
import { BlockError } from './stage.js';

/**
 * The checks every stage makes of a block it is given, in one wording: its
 * domain is the stage's, and its parts have one length (x and y of a complex
 * block, the four channels of a channel block).
 * @throws BlockError naming the stage
 * @example checkBlock('my-stage', block, 'symbols');
 */
export function checkBlock(stage: string, block: AnyBlock, domain: Domain): void {
  if (block.domain !== domain) throw new BlockError(`${stage}: expected a '${domain}' block, received '${block.domain}'`);
  if (block.domain === 'channels') {
    const n = block.xi.length;
    if (block.xq.length !== n || block.yi.length !== n || block.yq.length !== n)
      throw new BlockError(
        `${stage}: channel lengths differ (xi ${n}, xq ${block.xq.length}, yi ${block.yi.length}, yq ${block.yq.length})`,
      );
  } else if (block.y.length !== block.x.length) {
    throw new BlockError(`${stage}: x has ${block.x.length >> 1} samples, y has ${block.y.length >> 1}`);
  }
}

/**
 * A block's rate checked against the stream's (NaN before the first
 * block): positive and finite, and the same as before, since a stage's
 * filters and loops are set for it. Returns the rate, to keep.
 * @throws BlockError naming the stage
 * @example this.sampleRate = checkRate(NAME, this.sampleRate, block.sampleRate);
 */
export function checkRate(stage: string, previous: number, rate: number): number {
  if (!(rate > 0) || !Number.isFinite(rate)) throw new BlockError(`${stage}: expected a positive, finite rate, received ${rate}`);
  if (!Number.isNaN(previous) && rate !== previous)
    throw new BlockError(`${stage}: the rate changed mid-stream from ${previous} to ${rate} (samples or symbols per second)`);
  return rate;
}
