import erfc from '@stdlib/math-base-special-erfc';
import {
  type ComplexArray,
  type Constellation,
  complexArray,
  constellation,
  decide,
  type FieldBlock,
  idealMatchedFilter,
  labelsToBits,
  type ModulationName,
  type Stage,
  simulate,
  sliceComplex,
} from '../../src/index.js';

/** Symbol rate of the carrier-recovery tests, Bd. */
export const RS = 32e9;

export interface CarrierSignal {
  /** Symbol-rate samples with the carrier (offset and phase noise) still on them. */
  readonly x: ComplexArray;
  readonly y: ComplexArray;
  /** What was sent. */
  readonly refX: ComplexArray;
  readonly refY: ComplexArray;
  /** True carrier phase per symbol, rad (common to both polarizations). */
  readonly carrierPhase: Float64Array;
}

/**
 * A test signal: the simulator at 2 samples per symbol (identity SOP), then
 * the ideal matched filter down to one sample per symbol.
 */
export function carrierSignal(o: {
  seed: number;
  modulation: ModulationName;
  symbols: number;
  esN0Db?: number;
  linewidthHz?: number;
  freqOffsetHz?: number;
}): CarrierSignal {
  const rollOff = 0.1;
  const cap = simulate({
    seed: o.seed,
    modulation: o.modulation,
    symbols: o.symbols,
    symbolRate: RS,
    samplesPerSymbol: 2,
    rollOff,
    channel: { esN0Db: o.esN0Db, linewidthHz: o.linewidthHz ?? 0, freqOffsetHz: o.freqOffsetHz ?? 0 },
  });
  return {
    x: idealMatchedFilter(cap.truth.field.x, o.symbols, RS, rollOff),
    y: idealMatchedFilter(cap.truth.field.y, o.symbols, RS, rollOff),
    refX: cap.reference.x,
    refY: cap.reference.y,
    carrierPhase: cap.truth.carrierPhase,
  };
}

/** z·e^(jθ) for every sample (a copy). */
export function rotate(z: ComplexArray, theta: number): ComplexArray {
  const out = z.slice() as ComplexArray;
  const c = Math.cos(theta);
  const s = Math.sin(theta);
  for (let k = 0; k < out.length; k += 2) {
    out[k] = z[k] * c - z[k + 1] * s;
    out[k + 1] = z[k] * s + z[k + 1] * c;
  }
  return out;
}

/**
 * Bit errors of recovered symbols against the sent ones after resolving the
 * π/2 ambiguity once for the whole array (the rotation j^q with the fewest
 * symbol errors), decided with core's slicer. A cycle slip is not repaired:
 * it shows as errors.
 */
export function countBitErrors(
  c: Constellation,
  recovered: ComplexArray,
  reference: ComplexArray,
): { errors: number; bits: number } {
  const sent = labelsToBits(c, decide(c, reference));
  let best = Number.POSITIVE_INFINITY;
  for (let q = 0; q < 4; q++) {
    const bits = labelsToBits(c, decide(c, rotate(recovered, (q * Math.PI) / 2)));
    let e = 0;
    for (let i = 0; i < bits.length; i++) if (bits[i] !== sent[i]) e++;
    best = Math.min(best, e);
  }
  return { errors: best, bits: sent.length };
}

/** BER of Gray QPSK in AWGN: ½·erfc(√(SNR/2)) (Proakis, Digital Communications, 5th ed.). */
export function qpskBer(esN0Db: number): number {
  const snr = 10 ** (esN0Db / 10);
  return 0.5 * erfc(Math.sqrt(snr / 2));
}

/**
 * Exact BER of Gray 16QAM in AWGN (Cho & Yoon, IEEE Trans. Commun. 50(7), 2002):
 * (1/8)·[3·erfc(√(SNR/10)) + 2·erfc(3√(SNR/10)) − erfc(5√(SNR/10))].
 */
export function qam16Ber(esN0Db: number): number {
  const snr = 10 ** (esN0Db / 10);
  const u = Math.sqrt(snr / 10);
  return (3 * erfc(u) + 2 * erfc(3 * u) - erfc(5 * u)) / 8;
}

/** Es/N0 (dB) at which a decreasing BER curve reaches `target`, by bisection. */
export function snrForBer(ber: (db: number) => number, target: number): number {
  let lo = 0;
  let hi = 40;
  for (let i = 0; i < 100; i++) {
    const mid = (lo + hi) / 2;
    if (ber(mid) > target) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

export { constellation };

/** Streams x, y through a symbol stage in blocks of `blockSize` and returns the concatenated output. */
export function runSymbols(
  stage: Stage<'symbols', 'symbols', unknown>,
  x: ComplexArray,
  y: ComplexArray,
  blockSize = 4099,
): { x: ComplexArray; y: ComplexArray } {
  const n = x.length >> 1;
  const outX = complexArray(n);
  const outY = complexArray(n);
  let at = 0;
  const take = (b: FieldBlock<'symbols'> | null) => {
    if (!b) return;
    outX.set(b.x, 2 * at);
    outY.set(b.y, 2 * at);
    at += b.x.length >> 1;
  };
  for (let k = 0; k < n; k += blockSize) {
    const end = Math.min(n, k + blockSize);
    take(
      stage.process({
        domain: 'symbols',
        x: sliceComplex(x, k, end),
        y: sliceComplex(y, k, end),
        sampleRate: RS,
        samplesPerSymbol: 1,
      }),
    );
  }
  take(stage.flush());
  if (at !== n) throw new Error(`runSymbols: ${at} symbols out for ${n} in`);
  return { x: outX, y: outY };
}
