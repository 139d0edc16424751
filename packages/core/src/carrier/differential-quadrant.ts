import { checkBlock } from '../pipeline/block-checks.js';
import { type FieldBlock, fieldBlock } from '../pipeline/blocks.js';
import type { Stage, StageRecord } from '../pipeline/stage.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';

/**
 * Quadrant of a complex value, counted counter-clockwise: 0 for re ≥ 0 and
 * im ≥ 0, 1 for re < 0 and im ≥ 0, 2 for both negative, 3 for re ≥ 0 and
 * im < 0. A quarter turn e^(jπ/2) adds one (mod 4) for points off the axes.
 * @example quadrantOf(-0.7, 0.7) // 1 (second quadrant)
 */
export function quadrantOf(re: number, im: number): number {
  if (im >= 0) return re >= 0 ? 0 : 1;
  return re < 0 ? 2 : 3;
}

/**
 * Differential encoding of the quadrant, the encoding that
 * {@link differentialQuadrantDecoder} assumes: each data symbol aₖ is sent
 * turned by the quadrant of the previous sent symbol,
 *
 *   sₖ = aₖ · j^(Qₖ₋₁),   Qₖ = quadrant(sₖ) = (Qₖ₋₁ + quadrant(aₖ)) mod 4,   Q₋₁ = 0
 *
 * so the quadrant carries the data as an increment and the position within
 * the quadrant turns with it (Taylor, JLT 27(7), 2009, on differential
 * detection against cycle slips). For QPSK this is plain differential QPSK.
 * @param data N complex data symbols (off the axes, as square QAM points are)
 * @returns N symbols to send
 * @example const sent = differentialQuadrantEncode(mapBits(constellation('qpsk'), bits));
 */
export function differentialQuadrantEncode(data: ComplexArray): ComplexArray {
  const n = data.length >> 1;
  const out = complexArray(n);
  let q = 0;
  for (let k = 0; k < n; k++) {
    turn(data[2 * k], data[2 * k + 1], q, out, k);
    q = quadrantOf(out[2 * k], out[2 * k + 1]);
  }
  return out;
}

/** What the differential decoder did. */
export interface DifferentialDecoderDiagnostics {
  /** Symbols decoded so far, per polarization. */
  readonly symbols: number;
}

/**
 * Differential decoding of the quadrant (the inverse of
 * {@link differentialQuadrantEncode}), per polarization:
 *
 *   âₖ = rₖ · j^(−Q̂ₖ₋₁),   Q̂ₖ = quadrant(rₖ),   Q̂₋₁ = 0
 *
 * After it, a cycle slip (every later symbol turned by the same quarter
 * turns) corrupts one symbol instead of all the symbols that follow; the
 * price is about twice the symbol errors at a given SNR, since an error in
 * rₖ₋₁'s quadrant spoils âₖ as well. Place it after carrier-phase recovery,
 * before decisions. No look-ahead; output is identical whatever the block sizes.
 * @example const chain = pipe(blindPhaseSearch({ modulation: '16qam' }), differentialQuadrantDecoder());
 */
export function differentialQuadrantDecoder(): Stage<'symbols', 'symbols', DifferentialDecoderDiagnostics> {
  return new DifferentialDecoder();
}

class DifferentialDecoder implements Stage<'symbols', 'symbols', DifferentialDecoderDiagnostics> {
  readonly name = 'differential-quadrant-decoder';
  readonly input = 'symbols' as const;
  readonly output = 'symbols' as const;
  private qx = 0;
  private qy = 0;
  private count = 0;

  process(block: FieldBlock<'symbols'>): FieldBlock<'symbols'> {
    checkBlock(this.name, block, 'symbols');
    const x = complexArray(block.x.length >> 1);
    const y = complexArray(block.y.length >> 1);
    this.qx = decode(block.x, x, this.qx);
    this.qy = decode(block.y, y, this.qy);
    this.count += block.x.length >> 1;
    return fieldBlock('symbols', x, y, block.sampleRate, block.samplesPerSymbol);
  }

  flush(): null {
    return null;
  }

  reset(): void {
    this.qx = 0;
    this.qy = 0;
    this.count = 0;
  }

  diagnostics(): DifferentialDecoderDiagnostics {
    return { symbols: this.count };
  }

  describe(): StageRecord {
    return { stage: this.name, options: {} };
  }
}

// âₖ = rₖ·j^(−Q̂ₖ₋₁): quarter turns are exact swaps and sign changes.
function decode(r: ComplexArray, out: ComplexArray, q0: number): number {
  let q = q0;
  const n = r.length >> 1;
  for (let k = 0; k < n; k++) {
    const re = r[2 * k];
    const im = r[2 * k + 1];
    turn(re, im, (4 - q) & 3, out, k);
    q = quadrantOf(re, im);
  }
  return q;
}

/** Writes z·j^q (q in 0 … 3) into out[k]. */
function turn(re: number, im: number, q: number, out: ComplexArray, k: number): void {
  if (q === 0) {
    out[2 * k] = re;
    out[2 * k + 1] = im;
  } else if (q === 1) {
    out[2 * k] = -im;
    out[2 * k + 1] = re;
  } else if (q === 2) {
    out[2 * k] = -re;
    out[2 * k + 1] = -im;
  } else {
    out[2 * k] = im;
    out[2 * k + 1] = -re;
  }
}
