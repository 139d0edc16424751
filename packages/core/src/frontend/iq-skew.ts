import type { ChannelBlock, FieldBlock } from '../pipeline/blocks.js';
import { type ComplexArray, complexArray } from '../signal/complex.js';
import type { DualPol } from '../signal/dual-pol.js';
import { squareTimingTone, type TimingTone } from '../timing/square-timing.js';

/** What {@link estimateIqSkew} found for each polarization. */
export interface IqSkewEstimate {
  /**
   * Delay of the xq channel relative to xi, ps, as removed: the measured
   * delay shrunk by its standard error (NaN when a timing line was too weak to tell).
   */
  readonly xPs: number;
  /** Delay of yq relative to yi, ps, likewise. */
  readonly yPs: number;
  /** Standard error of x's measured delay, ps, from its spread over {@link SKEW_SEGMENTS} segments of the span (NaN with xPs). */
  readonly xStandardErrorPs: number;
  /** The same for y. */
  readonly yStandardErrorPs: number;
  /** Strength of the weaker of x's two timing lines, |line| / power (see {@link squareTimingTone}). */
  readonly strengthX: number;
  /** The same for y. */
  readonly strengthY: number;
}

/**
 * Weakest timing line trusted, |line| / power. Measured on simulated 32 GBd
 * DP-16QAM at roll-off 0.1: 0.013–0.027 without dispersion, 0.0075–0.014
 * with 1,360 ps/nm; a line fades towards 0 when a differential group delay
 * of half a symbol splits the power evenly between the principal states.
 */
export const MIN_TIMING_LINE = 0.003;

/** Segments of the span whose spread gives the skew's standard error. */
export const SKEW_SEGMENTS = 16;

/**
 * Blind receiver I/Q skew from the timing of each rail. A scope channel is
 * the real (or imaginary) part of the received field delayed by its own
 * skew; its square carries the symbol clock's spectral line, whose phase
 * is the channel's timing. Dispersion spreads the pulses and removes that
 * line, so each rail is taken alone as a field (I + j·0, then 0 + j·Q),
 * dispersion-compensated, and timed with the square-timing line of
 * Oerder & Meyr (IEEE Trans. Commun. 36(5), 1988): a rail alone is
 * ½(s + s̃*) with s the compensated field and s̃ its image (dispersed
 * twice), so its square keeps ¼ of s's line, at the rail's timing. The skew
 * of Q relative to I is the difference of the two timings,
 *
 *   τ_Q − τ_I = −wrap(arg c_Q − arg c_I)/(2π)·T,
 *
 * c the lines and T the symbol period; neither the carrier (the square
 * removes it) nor the IQ phase error enters. Unambiguous for |τ_Q − τ_I| < T/2.
 *
 * The estimate is noisy where the lines are weak, and most with a carrier
 * offset: a rail's square also holds s²·e^(±2jωt), whose spectrum then
 * reaches the clock line (measured on DP-256QAM with a 1.5 GHz offset and
 * no skew: 0.15–0.46 ps found). Removing a wrong skew is not harmless (a
 * residual τ leaves an image near −10·log10(π²τ²B²/3), B the signal's
 * bandwidth: −37 dB for 0.46 ps at 32 GBd), so the skew removed is the one
 * measured shrunk by its standard error s (from the spread of the skews of
 * {@link SKEW_SEGMENTS} equal segments of the span):
 *
 *   τ = τ̂·max(0, 1 − s²/τ̂²)
 *
 * the positive-part James–Stein factor, which estimates τ²/(τ² + s²), the
 * gain that minimizes the mean-square error of the correction. A skew many
 * standard errors large is removed whole (3 ps against s of 0.03–0.3 ps on
 * the simulated captures measured: a change of under 1 %).
 * @param field the received field at 2 samples per symbol, before dispersion compensation (x = xi + j·xq, y = yi + j·yq)
 * @param symbolRate Rs, Bd
 * @param compensate removes the dispersion from a whole dual-polarization field at 2 samples per symbol
 * @example const skew = estimateIqSkew(span, 32e9, (f) => cd(f)); skew.xPs // ≈ 3 for xq 3 ps late
 */
export function estimateIqSkew(field: DualPol, symbolRate: number, compensate: (field: DualPol) => DualPol): IqSkewEstimate {
  const period = 1e12 / symbolRate;
  // Q's delay relative to I from their lines: −wrap(arg c_Q − arg c_I)/(2π)·T.
  const skewOf = (ti: TimingTone, tq: TimingTone) => {
    let d = Math.atan2(tq.im, tq.re) - Math.atan2(ti.im, ti.re);
    d -= 2 * Math.PI * Math.round(d / (2 * Math.PI));
    return (-d / (2 * Math.PI)) * period;
  };
  const rail = (p: ComplexArray) => {
    const n = p.length >> 1;
    const i = complexArray(n);
    const q = complexArray(n);
    for (let k = 0; k < n; k++) {
      i[2 * k] = p[2 * k];
      q[2 * k + 1] = p[2 * k + 1];
    }
    const c = compensate({ x: i, y: q });
    const ti = squareTimingTone(c.x);
    const tq = squareTimingTone(c.y);
    const strength = Math.min(Math.hypot(ti.re, ti.im) / ti.power, Math.hypot(tq.re, tq.im) / tq.power);
    const skew = skewOf(ti, tq);
    // Segments of an even number of samples, so that each line's phase reference is the same.
    const seg = 2 * Math.floor((c.x.length >> 1) / (2 * SKEW_SEGMENTS));
    let se = Number.NaN;
    if (seg >= 64) {
      let sum = 0;
      let sum2 = 0;
      for (let k = 0; k < SKEW_SEGMENTS; k++) {
        const part = (z: ComplexArray) => z.subarray(2 * k * seg, 2 * (k + 1) * seg) as ComplexArray;
        // Each segment's skew taken near the whole span's, so that a wrap at ±T/2 does not count as spread.
        let d = skewOf(squareTimingTone(part(c.x)), squareTimingTone(part(c.y))) - skew;
        d -= period * Math.round(d / period);
        sum += d;
        sum2 += d * d;
      }
      const mean = sum / SKEW_SEGMENTS;
      se = Math.sqrt(Math.max(0, sum2 / SKEW_SEGMENTS - mean * mean) / (SKEW_SEGMENTS - 1));
    }
    const trusted = strength >= MIN_TIMING_LINE;
    const shrink = skew === 0 || Number.isNaN(se) ? 1 : Math.max(0, 1 - (se * se) / (skew * skew));
    return { skew: trusted ? skew * shrink : Number.NaN, se: trusted ? se : Number.NaN, strength };
  };
  const x = rail(field.x);
  const y = rail(field.y);
  return {
    xPs: x.skew,
    yPs: y.skew,
    xStandardErrorPs: x.se,
    yStandardErrorPs: y.se,
    strengthX: x.strength,
    strengthY: y.strength,
  };
}

/**
 * A field block's rails as scope channels (xi = Re x, xq = Im x, …), for the channel stages.
 * @example const ch = fieldToChannels(block); deskew.process(ch);
 */
export function fieldToChannels(block: FieldBlock<'twoSps'>): ChannelBlock {
  const n = block.x.length >> 1;
  const xi = new Float64Array(n);
  const xq = new Float64Array(n);
  const yi = new Float64Array(n);
  const yq = new Float64Array(n);
  for (let k = 0; k < n; k++) {
    xi[k] = block.x[2 * k];
    xq[k] = block.x[2 * k + 1];
    yi[k] = block.y[2 * k];
    yq[k] = block.y[2 * k + 1];
  }
  return { domain: 'channels', xi, xq, yi, yq, sampleRate: block.sampleRate, samplesPerSymbol: block.samplesPerSymbol };
}
