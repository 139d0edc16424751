import { type ChannelBlock, emptyBlock } from '../pipeline/blocks.js';
import { LeadingSpan } from '../pipeline/leading-span.js';
import { OptionError, type Stage, type StageRecord } from '../pipeline/stage.js';
import { checkChannels } from './normalize-channels.js';

/** 'gsop': Gram–Schmidt, I kept as the reference axis; 'lowdin': symmetric, both axes move by half the error. */
export type OrthogonalizationMethod = 'gsop' | 'lowdin';

/** Options of {@link orthogonalizeIq}. */
export interface OrthogonalizeIqOptions {
  /** Default 'gsop'. */
  readonly method?: OrthogonalizationMethod;
  /**
   * Samples per channel at the start of the capture on which the
   * correlations are estimated (default 262,144); held back until they have
   * all arrived. The data's own correlation over N samples departs from 0 by
   * about √(2/N) (twice the average density at DC at 2 samples per symbol),
   * a Q axis turned by that much: an image at −45 dB for 65,536 samples,
   * −51 dB at the default.
   */
  readonly calibrationSamples?: number;
}

/** What the stage measured on one polarization. */
export interface IqImbalanceEstimate {
  /** Departure of the Q axis from 90°, degrees: asin(E[IQ]/√(E[I²]E[Q²])). */
  readonly phaseErrorDeg: number;
  /** Gain of Q relative to I, dB: 10·log10(E[Q²]/E[I²]). */
  readonly gainDb: number;
  /** The 2×2 real correction [a, b, c, d]: I' = a·I + b·Q, Q' = c·I + d·Q. */
  readonly matrix: readonly [number, number, number, number];
}

/** What {@link orthogonalizeIq} estimated. */
export interface OrthogonalizeIqDiagnostics {
  /** The method used. */
  readonly method: OrthogonalizationMethod;
  /** Null until the calibration span has been seen. */
  readonly x: IqImbalanceEstimate | null;
  /** The y polarization's imbalance; null until the calibration span has been seen. */
  readonly y: IqImbalanceEstimate | null;
}

/**
 * IQ imbalance correction per polarization by orthogonalizing the I and Q
 * channels.
 *
 * With the second moments P_I = E[I²], P_Q = E[Q²], C = E[I·Q] (channels
 * assumed free of DC: run {@link normalizeChannels} first):
 *
 * GSOP (Fatadin, Savory & Ives, "Compensation of quadrature imbalance in an
 * optical QPSK coherent receiver", IEEE PTL 20(20), 2008):
 *   I' = I/√P_I,  Q₀ = Q − (C/P_I)·I,  Q' = Q₀/√(P_Q − C²/P_I)
 *
 * Löwdin symmetric orthogonalization (Löwdin, J. Chem. Phys. 18(3), 1950):
 * with ρ = C/√(P_I·P_Q) and the overlap matrix S = [[1, ρ], [ρ, 1]],
 *   [I'; Q'] = S^(−1/2)·[I/√P_I; Q/√P_Q],
 *   S^(−1/2) = [[a, b], [b, a]],  a, b = ((1+ρ)^(−1/2) ± (1−ρ)^(−1/2))/2
 * the orthogonal pair closest to the measured axes.
 *
 * Both outputs are then scaled by √((P_I + P_Q)/2), so the polarization keeps
 * its power. For the receiver model Q_meas = g·(Q·cos φ + I·sin φ), the
 * estimates are φ̂ = asin ρ and ĝ² = P_Q/P_I (reported as diagnostics).
 * The moments are estimated once on the leading calibration span.
 *
 * @throws OptionError for an unknown method or a calibration span that is not a positive integer
 * @example const iq = orthogonalizeIq({ method: 'lowdin' });
 */
export function orthogonalizeIq(options: OrthogonalizeIqOptions = {}): Stage<'channels', 'channels', OrthogonalizeIqDiagnostics> {
  return new OrthogonalizeIq(options);
}

/**
 * The correction matrix [a, b, c, d] (I' = a·I + b·Q, Q' = c·I + d·Q) from
 * the second moments P_I, P_Q, C of one polarization. Pure.
 * @throws RangeError when the moments are not those of two independent axes (P ≤ 0 or |ρ| ≥ 1)
 * @example const [a, b, c, d] = orthogonalizationMatrix('gsop', 1, 1, 0.1); // I' = a·I + b·Q, Q' = c·I + d·Q
 */
export function orthogonalizationMatrix(
  method: OrthogonalizationMethod,
  pI: number,
  pQ: number,
  c: number,
): [number, number, number, number] {
  const rho = c / Math.sqrt(pI * pQ);
  if (!(pI > 0 && pQ > 0 && Math.abs(rho) < 1)) {
    throw new RangeError(`orthogonalizationMatrix: I and Q are not independent axes (P_I ${pI}, P_Q ${pQ}, ρ ${rho})`);
  }
  const s = Math.sqrt((pI + pQ) / 2);
  if (method === 'gsop') {
    const q0 = Math.sqrt(pQ - (c * c) / pI);
    return [s / Math.sqrt(pI), 0, (-s * c) / (pI * q0), s / q0];
  }
  const u = 1 / Math.sqrt(1 + rho);
  const v = 1 / Math.sqrt(1 - rho);
  const a = (u + v) / 2;
  const b = (u - v) / 2;
  const gi = s / Math.sqrt(pI);
  const gq = s / Math.sqrt(pQ);
  return [a * gi, b * gq, b * gi, a * gq];
}

class OrthogonalizeIq implements Stage<'channels', 'channels', OrthogonalizeIqDiagnostics> {
  readonly name = 'orthogonalize-iq';
  readonly input = 'channels' as const;
  readonly output = 'channels' as const;
  private readonly method: OrthogonalizationMethod;
  private readonly calibrationSamples: number;
  private readonly span: LeadingSpan<ChannelBlock>;
  private estimates: [IqImbalanceEstimate, IqImbalanceEstimate] | null = null;

  constructor(o: OrthogonalizeIqOptions) {
    this.method = o.method ?? 'gsop';
    if (this.method !== 'gsop' && this.method !== 'lowdin') {
      throw new OptionError(this.name, 'method', "'gsop' or 'lowdin'", o.method);
    }
    this.calibrationSamples = o.calibrationSamples ?? 262_144;
    if (!Number.isInteger(this.calibrationSamples) || this.calibrationSamples < 1) {
      throw new OptionError(this.name, 'calibrationSamples', 'a positive integer', o.calibrationSamples);
    }
    this.span = new LeadingSpan(this.calibrationSamples);
  }

  process(block: ChannelBlock): ChannelBlock {
    checkChannels(this.name, block);
    if (!this.span.ready) {
      const r = this.span.push(block);
      if (!r) return emptyBlock('channels', block.sampleRate, block.samplesPerSymbol);
      this.estimate(r.calibration);
      return this.apply(r.all);
    }
    return this.apply(block);
  }

  flush(): ChannelBlock | null {
    const r = this.span.finish();
    if (!r) return null;
    this.estimate(r.calibration);
    return this.apply(r.all);
  }

  reset(): void {
    this.span.reset();
    this.estimates = null;
  }

  diagnostics(): OrthogonalizeIqDiagnostics {
    return { method: this.method, x: this.estimates?.[0] ?? null, y: this.estimates?.[1] ?? null };
  }

  describe(): StageRecord {
    return { stage: this.name, options: { method: this.method, calibrationSamples: this.calibrationSamples } };
  }

  private estimate(block: ChannelBlock): void {
    this.estimates = [this.estimateOne(block.xi, block.xq), this.estimateOne(block.yi, block.yq)];
  }

  private estimateOne(I: Float64Array, Q: Float64Array): IqImbalanceEstimate {
    const n = I.length;
    let pI = 0;
    let pQ = 0;
    let c = 0;
    for (let k = 0; k < n; k++) {
      pI += I[k] * I[k];
      pQ += Q[k] * Q[k];
      c += I[k] * Q[k];
    }
    pI /= n;
    pQ /= n;
    c /= n;
    // Too few or degenerate samples: leave the channels as they are rather than divide by zero.
    const rho = c / Math.sqrt(pI * pQ);
    if (!(pI > 0 && pQ > 0 && Math.abs(rho) < 1)) {
      return { phaseErrorDeg: Number.NaN, gainDb: Number.NaN, matrix: [1, 0, 0, 1] };
    }
    return {
      phaseErrorDeg: (Math.asin(rho) * 180) / Math.PI,
      gainDb: 10 * Math.log10(pQ / pI),
      matrix: orthogonalizationMatrix(this.method, pI, pQ, c),
    };
  }

  private apply(block: ChannelBlock): ChannelBlock {
    const [ex, ey] = this.estimates!;
    const [xi, xq] = applyMatrix(ex.matrix, block.xi, block.xq);
    const [yi, yq] = applyMatrix(ey.matrix, block.yi, block.yq);
    return { ...block, xi, xq, yi, yq };
  }
}

function applyMatrix(
  m: readonly [number, number, number, number],
  I: Float64Array,
  Q: Float64Array,
): [Float64Array, Float64Array] {
  const n = I.length;
  const oi = new Float64Array(n);
  const oq = new Float64Array(n);
  const [a, b, c, d] = m;
  // [I'; Q'] = [[a, b], [c, d]]·[I; Q]
  for (let k = 0; k < n; k++) {
    oi[k] = a * I[k] + b * Q[k];
    oq[k] = c * I[k] + d * Q[k];
  }
  return [oi, oq];
}
