import { Sha256 } from '@intradyne/core';

/**
 * One piece of a sweep split over several processes or machines: shard
 * `index` of `count`, numbered from 0 (0 ≤ index < count), as Kubernetes
 * completion indices and Slurm arrays written `--array=0-(N-1)` number them.
 */
export interface ShardSpec {
  /** This shard, K of `--shard K/N` (0 ≤ index < count). */
  readonly index: number;
  /** Number of shards, N (≥ 1). */
  readonly count: number;
}

const UTF8 = new TextEncoder();

/**
 * The shard a capture belongs to: the SHA-256 (FIPS 180-4) of the UTF-8 bytes
 * of its key (its path relative to the sweep root, '/' separators), the
 * first 8 bytes of the digest read as a big-endian unsigned 64-bit integer,
 * modulo `count`. The key holds no machine-specific part, so a capture falls
 * in the same shard on every machine, and SHA-256's output is uniform, so
 * each shard holds a binomial share of the captures (mean total/count). The
 * 2^64 range makes the modulo bias below count/2^64, nothing.
 * @param key the capture's key (`SweepCapture.key`)
 * @param count the number of shards (a positive integer)
 * @returns the shard index, 0 ≤ index < count
 * @example shardOf('run-1/osnr-a.csv', 4) // one of 0, 1, 2, 3, the same everywhere
 */
export function shardOf(key: string, count: number): number {
  const hex = new Sha256().update(UTF8.encode(key)).hex();
  return Number(BigInt(`0x${hex.slice(0, 16)}`) % BigInt(count));
}

/**
 * Keeps the items whose key falls in the shard, in their order.
 * @example inShard(sweepInputs('osnr-sweep').captures, { index: 1, count: 4 })
 */
export function inShard<
  T extends {
    /** The item's shard key (a capture's path relative to the sweep root). */
    readonly key: string;
  },
>(items: readonly T[], shard: ShardSpec): T[] {
  return items.filter((c) => shardOf(c.key, shard.count) === shard.index);
}

/** The shard's output subfolder inside a sweep's output folder: `shard-K-of-N`. */
export function shardFolderName(shard: ShardSpec): string {
  return `shard-${shard.index}-of-${shard.count}`;
}

/** `K/N` as written on the command line. */
export function shardLabel(shard: ShardSpec): string {
  return `${shard.index}/${shard.count}`;
}
