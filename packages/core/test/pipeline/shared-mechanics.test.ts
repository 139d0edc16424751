import { describe, expect, it } from 'vitest';
import {
  BlockError,
  type ChannelBlock,
  checkBlock,
  checkRate,
  DualPolBuffer,
  defaultReceiver,
  fromParts,
  runReceiver,
  Sha256,
  simulate,
} from '../../src/index.js';

describe('the growable dual-polarization buffer', () => {
  it('keeps what was appended, in order, across growths and drops', () => {
    const b = new DualPolBuffer(2);
    const re = Array.from({ length: 37 }, (_, k) => k);
    for (let k = 0; k < re.length; k += 5) {
      const part = re.slice(k, k + 5);
      b.append(
        fromParts(
          part,
          part.map((v) => -v),
        ),
        fromParts(
          part.map((v) => 2 * v),
          part,
        ),
      );
    }
    expect(b.length).toBe(37);
    expect(Array.from(b.view(3, 5).x)).toEqual([3, -3, 4, -4]);
    b.dropFront(30);
    expect(b.length).toBe(7);
    expect(Array.from(b.copy().y.subarray(0, 4))).toEqual([60, 30, 62, 31]);
    expect(() => b.append(fromParts([1], [1]), fromParts([], []))).toThrow(RangeError);
  });
});

describe('the block checks', () => {
  it('refuse a block of another domain, unequal parts and a rate that changes', () => {
    const z = fromParts([1, 2], [0, 0]);
    const ok = { domain: 'symbols' as const, x: z, y: z, sampleRate: 32e9, samplesPerSymbol: 1 };
    expect(() => checkBlock('s', ok, 'symbols')).not.toThrow();
    expect(() => checkBlock('s', ok, 'twoSps')).toThrow(/s: expected a 'twoSps' block, received 'symbols'/);
    expect(() => checkBlock('s', { ...ok, y: fromParts([1], [0]) }, 'symbols')).toThrow(/x has 2 samples, y has 1/);
    const c = new Float64Array(3);
    const channels: ChannelBlock = {
      domain: 'channels',
      xi: c,
      xq: c,
      yi: c,
      yq: new Float64Array(2),
      sampleRate: 1,
      samplesPerSymbol: 2,
    };
    expect(() => checkBlock('s', channels, 'channels')).toThrow(/channel lengths differ/);
    expect(checkRate('s', Number.NaN, 32e9)).toBe(32e9);
    expect(checkRate('s', 32e9, 32e9)).toBe(32e9);
    expect(() => checkRate('s', 32e9, 16e9)).toThrow(BlockError);
    expect(() => checkRate('s', Number.NaN, 0)).toThrow(/positive, finite rate/);
  });
});

describe('a whole run of a receiver', () => {
  it('hands out every symbol, and hashes the input whatever the blocks', () => {
    const cap = simulate({ seed: 3, modulation: 'qpsk', symbols: 6000, symbolRate: 32e9, samplesPerSymbol: 2 });
    const all: ChannelBlock = { domain: 'channels', ...cap.channels, samplesPerSymbol: 2 };
    const blocks = (size: number): ChannelBlock[] => {
      const out: ChannelBlock[] = [];
      for (let k = 0; k < all.xi.length; k += size) {
        const part = (a: Float64Array) => a.subarray(k, k + size);
        out.push({ ...all, xi: part(all.xi), xq: part(all.xq), yi: part(all.yi), yq: part(all.yq) });
      }
      return out;
    };
    const settings = { modulation: 'qpsk', symbolRate: 32e9, sampleRate: 64e9 } as const;
    let handedOut = 0;
    const one = runReceiver([all], defaultReceiver(settings), (b) => {
      handedOut += b.x.length >> 1;
    });
    const many = runReceiver(blocks(1000), defaultReceiver(settings), () => {});
    expect(handedOut).toBe(one.symbols);
    expect(one.symbols).toBe(many.symbols);
    expect(one.samples).toBe(12000);
    expect(many.inputSha256).toBe(one.inputSha256);
    // The digest of the rows (xi, xq, yi, yq) as little-endian float64, computed here directly.
    const rows = new Float64Array(4 * 12000);
    for (let k = 0; k < 12000; k++) rows.set([all.xi[k], all.xq[k], all.yi[k], all.yq[k]], 4 * k);
    expect(one.inputSha256).toBe(new Sha256().update(new Uint8Array(rows.buffer)).hex());
    expect(one.pipeline.stage).toBe('default-receiver');
  });
});
