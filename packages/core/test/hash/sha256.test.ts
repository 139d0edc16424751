import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { Rng, Sha256 } from '../../src/index.js';

const text = (s: string) => new TextEncoder().encode(s);

describe('SHA-256', () => {
  it('gives the FIPS 180-4 example digests', () => {
    // NIST FIPS 180-4 examples (SHA256.pdf, csrc.nist.gov): "abc" and the 448-bit message.
    expect(new Sha256().update(text('abc')).hex()).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(new Sha256().update(text('abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq')).hex()).toBe(
      '248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1',
    );
    expect(new Sha256().hex()).toBe('e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855');
  });

  it("matches Node's crypto on random data fed in uneven pieces", () => {
    const data = new Uint8Array(10_000);
    const rng = new Rng(4);
    for (let i = 0; i < data.length; i++) data[i] = rng.nextUint32() & 255;
    const h = new Sha256();
    for (let at = 0; at < data.length; ) {
      const n = 1 + rng.integer(200);
      h.update(data.subarray(at, at + n));
      at += n;
    }
    expect(h.hex()).toBe(createHash('sha256').update(data).digest('hex'));
    const samples = Float64Array.of(1.5, -2.25, Math.PI);
    expect(new Sha256().updateFloat64(samples).hex()).toBe(
      createHash('sha256').update(new Uint8Array(samples.buffer)).digest('hex'),
    );
  });
});
