/**
 * SHA-256 (NIST FIPS 180-4), incremental, in pure TypeScript so that core can
 * fingerprint input samples for reproducibility records without a Node API.
 *
 * @example
 * const h = new Sha256(); h.update(bytes); h.hex() // 64 hex digits
 */
export class Sha256 {
  private readonly state = new Int32Array(8);
  private readonly block = new Uint8Array(64);
  private readonly words = new Int32Array(64);
  private filled = 0;
  private bytes = 0;
  private done = false;

  constructor() {
    this.state.set(INITIAL);
  }

  /** Adds bytes to the message. @throws Error after `hex()` */
  update(data: Uint8Array): this {
    if (this.done) throw new Error('Sha256: update after the digest was taken');
    let i = 0;
    this.bytes += data.length;
    while (i < data.length) {
      const take = Math.min(64 - this.filled, data.length - i);
      this.block.set(data.subarray(i, i + take), this.filled);
      this.filled += take;
      i += take;
      if (this.filled === 64) {
        this.compress();
        this.filled = 0;
      }
    }
    return this;
  }

  /**
   * Adds the samples' IEEE-754 bytes, little-endian whatever the platform, so
   * that the same samples give the same digest everywhere.
   */
  updateFloat64(values: Float64Array): this {
    return this.update(littleEndianBytes(values));
  }

  /** The digest as 64 lower-case hex digits; the hasher is then closed. */
  hex(): string {
    if (!this.done) {
      const bitsHi = Math.floor((this.bytes * 8) / 2 ** 32);
      const bitsLo = (this.bytes * 8) >>> 0;
      this.block[this.filled++] = 0x80;
      if (this.filled > 56) {
        this.block.fill(0, this.filled);
        this.compress();
        this.filled = 0;
      }
      this.block.fill(0, this.filled, 56);
      const v = new DataView(this.block.buffer);
      v.setUint32(56, bitsHi);
      v.setUint32(60, bitsLo);
      this.compress();
      this.done = true;
    }
    let out = '';
    for (const w of this.state) out += (w >>> 0).toString(16).padStart(8, '0');
    return out;
  }

  private compress(): void {
    const w = this.words;
    const b = this.block;
    for (let t = 0; t < 16; t++) w[t] = (b[4 * t] << 24) | (b[4 * t + 1] << 16) | (b[4 * t + 2] << 8) | b[4 * t + 3];
    for (let t = 16; t < 64; t++) {
      const x = w[t - 15];
      const y = w[t - 2];
      const s0 = rotr(x, 7) ^ rotr(x, 18) ^ (x >>> 3);
      const s1 = rotr(y, 17) ^ rotr(y, 19) ^ (y >>> 10);
      w[t] = (w[t - 16] + s0 + w[t - 7] + s1) | 0;
    }
    const s = this.state;
    let a = s[0];
    let c1 = s[1];
    let c2 = s[2];
    let d = s[3];
    let e = s[4];
    let f = s[5];
    let g = s[6];
    let h = s[7];
    for (let t = 0; t < 64; t++) {
      const S1 = rotr(e, 6) ^ rotr(e, 11) ^ rotr(e, 25);
      const ch = (e & f) ^ (~e & g);
      const t1 = (h + S1 + ch + K[t] + w[t]) | 0;
      const S0 = rotr(a, 2) ^ rotr(a, 13) ^ rotr(a, 22);
      const maj = (a & c1) ^ (a & c2) ^ (c1 & c2);
      const t2 = (S0 + maj) | 0;
      h = g;
      g = f;
      f = e;
      e = (d + t1) | 0;
      d = c2;
      c2 = c1;
      c1 = a;
      a = (t1 + t2) | 0;
    }
    s[0] += a;
    s[1] += c1;
    s[2] += c2;
    s[3] += d;
    s[4] += e;
    s[5] += f;
    s[6] += g;
    s[7] += h;
  }
}

const LITTLE_ENDIAN = new Uint8Array(Uint16Array.of(1).buffer)[0] === 1;

/**
 * The values' IEEE-754 bytes, little-endian whatever the platform (a view of
 * the same memory on a little-endian one): what fingerprints hash.
 * @example new Sha256().update(littleEndianBytes(samples)).hex()
 */
export function littleEndianBytes(values: Float64Array): Uint8Array {
  if (LITTLE_ENDIAN) return new Uint8Array(values.buffer, values.byteOffset, values.byteLength);
  const bytes = new Uint8Array(values.length * 8);
  const view = new DataView(bytes.buffer);
  for (let k = 0; k < values.length; k++) view.setFloat64(8 * k, values[k], true);
  return bytes;
}

function rotr(x: number, n: number): number {
  return (x >>> n) | (x << (32 - n));
}

// FIPS 180-4 §5.3.3 and §4.2.2.
const INITIAL = Int32Array.of(0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a, 0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19);
const K = Int32Array.of(
  0x428a2f98,
  0x71374491,
  0xb5c0fbcf,
  0xe9b5dba5,
  0x3956c25b,
  0x59f111f1,
  0x923f82a4,
  0xab1c5ed5,
  0xd807aa98,
  0x12835b01,
  0x243185be,
  0x550c7dc3,
  0x72be5d74,
  0x80deb1fe,
  0x9bdc06a7,
  0xc19bf174,
  0xe49b69c1,
  0xefbe4786,
  0x0fc19dc6,
  0x240ca1cc,
  0x2de92c6f,
  0x4a7484aa,
  0x5cb0a9dc,
  0x76f988da,
  0x983e5152,
  0xa831c66d,
  0xb00327c8,
  0xbf597fc7,
  0xc6e00bf3,
  0xd5a79147,
  0x06ca6351,
  0x14292967,
  0x27b70a85,
  0x2e1b2138,
  0x4d2c6dfc,
  0x53380d13,
  0x650a7354,
  0x766a0abb,
  0x81c2c92e,
  0x92722c85,
  0xa2bfe8a1,
  0xa81a664b,
  0xc24b8b70,
  0xc76c51a3,
  0xd192e819,
  0xd6990624,
  0xf40e3585,
  0x106aa070,
  0x19a4c116,
  0x1e376c08,
  0x2748774c,
  0x34b0bcb5,
  0x391c0cb3,
  0x4ed8aa4a,
  0x5b9cca4f,
  0x682e6ff3,
  0x748f82ee,
  0x78a5636f,
  0x84c87814,
  0x8cc70208,
  0x90befffa,
  0xa4506ceb,
  0xbef9a3f7,
  0xc67178f2,
);
