import { type ComplexArray, complexArray } from '../signal/complex.js';
import type { DualPol } from '../signal/dual-pol.js';

/**
 * Complex samples of both polarizations appended as they come, in arrays
 * that double when full (amortized constant time per sample): the one
 * growable dual-polarization buffer of the library.
 * @example const b = new DualPolBuffer(); b.append(block.x, block.y); b.view().x
 */
export class DualPolBuffer {
  private x: ComplexArray;
  private y: ComplexArray;
  private used = 0;

  /** @param capacity samples per polarization to hold before the first growth */
  constructor(capacity = 4096) {
    this.x = complexArray(Math.max(1, capacity));
    this.y = complexArray(Math.max(1, capacity));
  }

  /** Samples held per polarization. */
  get length(): number {
    return this.used;
  }

  /** Appends x and y (interleaved complex, one length). */
  append(x: ComplexArray, y: ComplexArray): void {
    if (x.length !== y.length) throw new RangeError(`DualPolBuffer: x has ${x.length >> 1} samples, y has ${y.length >> 1}`);
    const need = this.used + (x.length >> 1);
    if (2 * need > this.x.length) {
      let size = this.x.length >> 1;
      while (size < need) size *= 2;
      this.x = grown(this.x, size, this.used);
      this.y = grown(this.y, size, this.used);
    }
    this.x.set(x, 2 * this.used);
    this.y.set(y, 2 * this.used);
    this.used = need;
  }

  /** Samples [start, end) as views into the buffer: valid until the next append or drop. */
  view(start = 0, end = this.used): DualPol {
    return { x: this.x.subarray(2 * start, 2 * end) as ComplexArray, y: this.y.subarray(2 * start, 2 * end) as ComplexArray };
  }

  /** Samples [start, end) copied. */
  copy(start = 0, end = this.used): DualPol {
    return { x: this.x.slice(2 * start, 2 * end) as ComplexArray, y: this.y.slice(2 * start, 2 * end) as ComplexArray };
  }

  /** Drops the first `n` samples, keeping the rest in order. */
  dropFront(n: number): void {
    const k = Math.min(n, this.used);
    this.x.copyWithin(0, 2 * k, 2 * this.used);
    this.y.copyWithin(0, 2 * k, 2 * this.used);
    this.used -= k;
  }

  /** Forgets every sample; with `release`, gives the memory back too. */
  clear(release = false): void {
    this.used = 0;
    if (release) {
      this.x = complexArray(1);
      this.y = complexArray(1);
    }
  }
}

function grown(a: ComplexArray, size: number, used: number): ComplexArray {
  const b = complexArray(size);
  b.set(a.subarray(0, 2 * used));
  return b;
}
