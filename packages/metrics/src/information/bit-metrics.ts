import type { ComplexArray, Constellation } from '@intradyne/core';

/** How bit metrics (L-values) are computed from the Gaussian symbol metrics. */
export type BitMetric = 'exact' | 'max-log';

/**
 * Noise variance per complex symbol of a Gaussian channel fitted to the
 * data: σ̂² = (1/N)·Σ|rₖ − aₖ|², r at the constellation's scale, a the
 * transmitted points. The fitted channel is q(r|a) ∝ exp(−|r − a|²/σ̂²).
 * @throws RangeError when the lengths differ or N = 0
 * @example fittedNoiseVariance(z, a) // ≈ 0.1 at 10 dB
 */
export function fittedNoiseVariance(received: ComplexArray, reference: ComplexArray): number {
  const n = received.length >> 1;
  if (received.length !== reference.length || n === 0) {
    throw new RangeError(
      `fittedNoiseVariance: expected as many received as reference symbols (≥ 1), received ${n} and ${reference.length >> 1}`,
    );
  }
  let e = 0;
  for (let i = 0; i < received.length; i++) {
    const d = received[i] - reference[i];
    e += d * d;
  }
  return e / n;
}

/** Information estimates from one pass over the symbols. */
export interface InformationEstimate {
  /** Bit-wise GMI, bits per symbol (per polarization). */
  readonly gmi: number;
  /** Symbol-wise MI, bits per symbol (per polarization). */
  readonly mi: number;
}

/**
 * Estimates the bit-wise GMI and the symbol-wise MI from samples, for
 * uniform symbols and the Gaussian auxiliary channel
 * q(r|x) = exp(−|r − x|²/σ²) (Alvarado, Fehenberger, Chen, Willems,
 * "Achievable information rates for fiber optics: applications and
 * computations", JLT 36(2), 2018):
 *
 *   GMI ≈ m − (1/N)·Σₖ Σᵢ log2( Σ_{x∈𝒳} q(rₖ|x) / Σ_{x∈𝒳ᵢ^(bₖ,ᵢ)} q(rₖ|x) ),
 *   MI  ≈ m − (1/N)·Σₖ log2( Σ_{x∈𝒳} q(rₖ|x) / q(rₖ|aₖ) ),
 *
 * m = log2 M, 𝒳ᵢ^b the points whose i-th bit is b, bₖ,ᵢ the transmitted bits.
 * The GMI term equals log2(1 + e^(−λ)) with the L-value
 * λ = ln Σ_{𝒳ᵢ^(b)} q − ln Σ_{𝒳ᵢ^(1−b)} q, computed by log-sum-exp
 * ('exact', default) or by its max-log approximation ln Σ q ≈ max ln q
 * ('max-log', which gives less). The MI always uses exact sums.
 *
 * With a non-uniform prior P (a shaped format) the sums are weighted by it
 * and m becomes the entropy H of the prior (Alvarado et al. 2018 for the
 * GMI of non-uniform signalling; the bit-metric decoding rate of Böcherer
 * et al. 2015):
 *
 *   GMI ≈ H − (1/N)·Σₖ Σᵢ log2( Σ_{x∈𝒳} P(x)·q(rₖ|x) / Σ_{x∈𝒳ᵢ^(bₖ,ᵢ)} P(x)·q(rₖ|x) ),
 *   MI  ≈ H − (1/N)·Σₖ log2( Σ_{x∈𝒳} P(x)·q(rₖ|x) / (P(aₖ)·q(rₖ|aₖ)) ).
 *
 * Square QAM is evaluated per axis: q factorizes into in-phase and
 * quadrature Gaussians (and the Maxwell–Boltzmann prior into per-axis
 * priors), and with the per-axis Gray labelling every bit depends on one
 * axis only, so the other axis's sum cancels from each term (for the
 * max-log metric too): the sums run over √M levels instead of M points,
 * with the same result. Other constellations (cross QAM, 8QAM) sum over
 * their M points.
 * @param received N symbols at the constellation's scale
 * @param sent N transmitted labels
 * @param noiseVariance σ² per complex symbol, > 0 (see {@link fittedNoiseVariance})
 * @throws RangeError when lengths differ, N = 0 or σ² is not positive and finite
 * @example informationEstimate(c, z, labels, fittedNoiseVariance(z, a)).gmi // ≈ 3.16 for 16QAM at 10 dB
 */
export function informationEstimate(
  c: Constellation,
  received: ComplexArray,
  sent: Uint8Array,
  noiseVariance: number,
  metric: BitMetric = 'exact',
): InformationEstimate {
  const n = received.length >> 1;
  if (sent.length !== n || n === 0) {
    throw new RangeError(`informationEstimate: expected as many labels as symbols (≥ 1), received ${sent.length} and ${n}`);
  }
  const acc = new InformationAccumulator(c, noiseVariance, metric);
  acc.add(received, sent);
  return acc.estimate();
}

/**
 * The sums of {@link informationEstimate} over symbols given in pieces:
 * `add` each piece in order, then `estimate()`. The same symbols in one
 * piece or many give the same sums, hence the same GMI and MI (the sums are
 * taken in the same order).
 * @example const acc = new InformationAccumulator(c, 0.05); acc.add(z1, s1); acc.add(z2, s2); acc.estimate().gmi;
 */
export class InformationAccumulator {
  private readonly c: Constellation;
  private readonly ax: Axis;
  private readonly indexOfCode: Uint8Array;
  private readonly table: AxisTable | null;
  /** The sums over the M points of a constellation that is not square QAM, else null. */
  private readonly points: PointSums | null;
  private n = 0;

  /**
   * @param noiseVariance σ² per complex symbol of the auxiliary channel, > 0
   * @throws RangeError when σ² is not positive and finite or the metric is unknown
   */
  constructor(c: Constellation, noiseVariance: number, metric: BitMetric = 'exact') {
    if (!(noiseVariance > 0) || !Number.isFinite(noiseVariance)) {
      throw new RangeError(`informationEstimate: expected a positive, finite noise variance, received ${noiseVariance}`);
    }
    if (metric !== 'exact' && metric !== 'max-log') {
      throw new RangeError(`informationEstimate: expected bit metric 'exact' or 'max-log', received '${String(metric)}'`);
    }
    const L = c.square ? c.levelsPerAxis : 0;
    this.c = c;
    this.ax = {
      L,
      bits: c.bitsPerSymbol / 2,
      levels: new Float64Array(L),
      codes: new Uint8Array(L),
      logPrior: c.shaped && c.square ? axisLogPrior(c) : null,
      inv: 1 / noiseVariance,
      exact: metric === 'exact',
      logq: new Float64Array(L),
      q: new Float64Array(L),
      bitLoss: 0,
      symbolLoss: 0,
    };
    // Level index of each per-axis Gray code: label = (code_I << half) | code_Q.
    this.indexOfCode = new Uint8Array(L);
    for (let j = 0; j < L; j++) {
      this.ax.levels[j] = (2 * j - (L - 1)) * c.scale;
      this.ax.codes[j] = j ^ (j >> 1);
      this.indexOfCode[this.ax.codes[j]] = j;
    }
    this.table = c.square ? axisTable(this.ax, noiseVariance) : null;
    this.points = c.square ? null : pointSums(c, noiseVariance, metric === 'exact');
  }

  /**
   * Adds N symbols.
   * @param received N symbols at the constellation's scale
   * @param sent N transmitted labels
   * @throws RangeError when the lengths differ
   */
  add(received: ComplexArray, sent: Uint8Array): void {
    const n = received.length >> 1;
    if (sent.length !== n) {
      throw new RangeError(`informationEstimate: expected as many labels as symbols, received ${sent.length} and ${n}`);
    }
    const ax = this.ax;
    const indexOfCode = this.indexOfCode;
    const half = ax.bits;
    const low = ax.L - 1;
    const t = this.table;
    const ps = this.points;
    if (ps !== null) {
      for (let k = 0; k < n; k++) pointTerms(ps, received[2 * k], received[2 * k + 1], sent[k]);
    } else if (t === null) {
      for (let k = 0; k < n; k++) {
        const label = sent[k];
        axisTerms(ax, received[2 * k], indexOfCode[label >> half]);
        axisTerms(ax, received[2 * k + 1], indexOfCode[label & low]);
      }
    } else {
      for (let k = 0; k < n; k++) {
        const label = sent[k];
        tabulatedTerms(t, ax, received[2 * k], indexOfCode[label >> half]);
        tabulatedTerms(t, ax, received[2 * k + 1], indexOfCode[label & low]);
      }
    }
    this.n += n;
  }

  /**
   * GMI and MI over the symbols added so far.
   * @throws RangeError when none was added
   */
  estimate(): InformationEstimate {
    const n = this.n;
    if (n === 0) throw new RangeError('informationEstimate: expected at least one symbol');
    // log2 M for a uniform prior (exactly as before priors were known), the prior's entropy otherwise.
    const m = this.c.shaped ? this.c.entropy : this.c.bitsPerSymbol;
    const loss = this.points ?? this.ax;
    return { gmi: m - loss.bitLoss / (n * Math.LN2), mi: m - loss.symbolLoss / (n * Math.LN2) };
  }
}

/** ln P of each level of one axis of shaped square QAM: the marginal of the prior (which factorizes over the axes). */
function axisLogPrior(c: Constellation): Float64Array {
  const L = c.levelsPerAxis;
  const p = new Float64Array(L);
  const inv = 1 / c.scale;
  for (let k = 0; k < c.order; k++) p[Math.round((c.points[2 * k] * inv + L - 1) / 2)] += c.prior[k];
  for (let j = 0; j < L; j++) p[j] = Math.log(p[j]);
  return p;
}

/** The state of the sums over the M points (constellations other than square QAM). */
interface PointSums {
  readonly c: Constellation;
  readonly inv: number;
  readonly exact: boolean;
  /** ln P of each point. */
  readonly logPrior: Float64Array;
  /** Scratch: ln(P·q) per point, and e^(ln(P·q) − max). */
  readonly logq: Float64Array;
  readonly q: Float64Array;
  bitLoss: number;
  symbolLoss: number;
}

function pointSums(c: Constellation, noiseVariance: number, exact: boolean): PointSums {
  const logPrior = new Float64Array(c.order);
  for (let k = 0; k < c.order; k++) logPrior[k] = Math.log(c.prior[k]);
  return {
    c,
    inv: 1 / noiseVariance,
    exact,
    logPrior,
    logq: new Float64Array(c.order),
    q: new Float64Array(c.order),
    bitLoss: 0,
    symbolLoss: 0,
  };
}

// Adds one symbol's GMI and MI losses (nats) over the M points: r = re + j·im sent as label `sent`.
function pointTerms(s: PointSums, re: number, im: number, sent: number): void {
  const { c, logq, q } = s;
  const M = c.order;
  const p = c.points;
  // ln(P(x)·q(r|x)) = ln P(x) − |r − x|²/σ² per point.
  let max = Number.NEGATIVE_INFINITY;
  for (let l = 0; l < M; l++) {
    const dr = re - p[2 * l];
    const di = im - p[2 * l + 1];
    logq[l] = s.logPrior[l] - (dr * dr + di * di) * s.inv;
    if (logq[l] > max) max = logq[l];
  }
  let all = 0;
  for (let l = 0; l < M; l++) all += q[l] = Math.exp(logq[l] - max);
  const logAll = Math.log(all);
  s.symbolLoss += logAll - (logq[sent] - max);
  const m = c.bitsPerSymbol;
  for (let i = 0; i < m; i++) {
    const mask = 1 << (m - 1 - i);
    const own = sent & mask;
    if (s.exact) {
      let ownSum = 0;
      for (let l = 0; l < M; l++) if ((l & mask) === own) ownSum += q[l];
      if (ownSum > 1e-280) {
        s.bitLoss += logAll - Math.log(ownSum);
        continue;
      }
    }
    // Max-log, or an own subset near underflow: ln Σ over each subset around its own maximum.
    const lOwn = s.exact ? subsetLogSum(logq, M, mask, own) : subsetMax(logq, M, mask, own);
    const lOther = s.exact ? subsetLogSum(logq, M, mask, own ^ mask) : subsetMax(logq, M, mask, own ^ mask);
    const x = lOther - lOwn;
    s.bitLoss += x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x));
  }
}

function subsetMax(v: Float64Array, M: number, mask: number, want: number): number {
  let max = Number.NEGATIVE_INFINITY;
  for (let l = 0; l < M; l++) if ((l & mask) === want && v[l] > max) max = v[l];
  return max;
}

function subsetLogSum(v: Float64Array, M: number, mask: number, want: number): number {
  const own = subsetMax(v, M, mask, want);
  let s = 0;
  for (let l = 0; l < M; l++) if ((l & mask) === want) s += Math.exp(v[l] - own);
  return own + Math.log(s);
}

interface Axis {
  readonly L: number;
  readonly bits: number;
  readonly levels: Float64Array;
  readonly codes: Uint8Array;
  /** ln P of each level (shaped square QAM), or null for uniform levels (whose prior cancels). */
  readonly logPrior: Float64Array | null;
  readonly inv: number;
  readonly exact: boolean;
  /** Scratch: ln q per level, and e^(ln q − max). */
  readonly logq: Float64Array;
  readonly q: Float64Array;
  bitLoss: number;
  symbolLoss: number;
}

/**
 * One axis's losses tabulated against the received value, per sent level:
 * bit[s·n + i] and symbol[s·n + i] are what {@link axisTerms} adds (nats) for
 * v = v0 + i·step sent on level s, over the levels' span and ten σₐ beyond
 * (σₐ = σ/√2 per axis), points σₐ/16 apart. The losses are smooth in v (sums
 * of Gaussians under a logarithm), and a Catmull–Rom cubic between the
 * points (error of order h³) keeps the GMI and MI within 4e-7 bit of the
 * exact sums (measured on 20,000 symbols each of QPSK at 0–15 dB, 16QAM at
 * 5–22 dB and 64QAM at 10–30 dB; linear interpolation at σₐ/64 was 5e-5
 * bit off). It replaces L exponentials and log2(L) + 1 logarithms per axis
 * by two interpolations (measured: the measurement of 2^18 DP-16QAM symbols
 * takes 1.2 µs per symbol instead of 1.6). Values beyond the table are
 * computed exactly.
 */
interface AxisTable {
  readonly v0: number;
  readonly step: number;
  readonly n: number;
  readonly bit: Float64Array;
  readonly symbol: Float64Array;
}

/** Most points per level of a table; beyond (a very high SNR), the losses are computed exactly. */
const MAX_TABLE_POINTS = 1 << 16;

function axisTable(ax: Axis, noiseVariance: number): AxisTable | null {
  const sigma = Math.sqrt(noiseVariance / 2);
  const step = sigma / 16;
  const reach = Math.abs(ax.levels[0]) + 10 * sigma;
  const n = Math.ceil((2 * reach) / step) + 2;
  if (n > MAX_TABLE_POINTS) return null;
  const v0 = -reach;
  const bit = new Float64Array(ax.L * n);
  const symbol = new Float64Array(ax.L * n);
  const scratch: Axis = { ...ax, bitLoss: 0, symbolLoss: 0 };
  for (let s = 0; s < ax.L; s++) {
    for (let i = 0; i < n; i++) {
      scratch.bitLoss = 0;
      scratch.symbolLoss = 0;
      axisTerms(scratch, v0 + i * step, s);
      bit[s * n + i] = scratch.bitLoss;
      symbol[s * n + i] = scratch.symbolLoss;
    }
  }
  return { v0, step, n, bit, symbol };
}

// Adds one axis's losses for v sent on level `sentLevel` from the table (exactly outside its reach).
function tabulatedTerms(t: AxisTable, ax: Axis, v: number, sentLevel: number): void {
  const p = (v - t.v0) / t.step;
  const i = Math.floor(p);
  if (!(i >= 1 && i < t.n - 2)) {
    axisTerms(ax, v, sentLevel);
    return;
  }
  const a = p - i;
  const j = sentLevel * t.n + i;
  ax.bitLoss += catmullRom(t.bit, j, a);
  ax.symbolLoss += catmullRom(t.symbol, j, a);
}

/** Catmull–Rom cubic through f[j − 1 … j + 2], at j + a (0 ≤ a < 1). */
function catmullRom(f: Float64Array, j: number, a: number): number {
  const p0 = f[j - 1];
  const p1 = f[j];
  const p2 = f[j + 1];
  const p3 = f[j + 2];
  return p1 + 0.5 * a * (p2 - p0 + a * (2 * p0 - 5 * p1 + 4 * p2 - p3 + a * (3 * (p1 - p2) + p3 - p0)));
}

// Adds one axis's share of the GMI and MI losses (nats) for the value v sent on level `sentLevel`.
function axisTerms(ax: Axis, v: number, sentLevel: number): void {
  const { L, logq, q } = ax;
  // ln q(v|s) = −(v − s)²/σ² per level (this axis's factor of the circular Gaussian).
  let max = Number.NEGATIVE_INFINITY;
  const logPrior = ax.logPrior;
  for (let l = 0; l < L; l++) {
    const d = v - ax.levels[l];
    // With a prior: ln(P·q) (the uniform prior cancels from every ratio and is left out).
    logq[l] = logPrior === null ? -d * d * ax.inv : logPrior[l] - d * d * ax.inv;
    if (logq[l] > max) max = logq[l];
  }
  // One exponential per level, shared by every subset sum.
  let all = 0;
  for (let l = 0; l < L; l++) all += q[l] = Math.exp(logq[l] - max);
  const logAll = Math.log(all);
  ax.symbolLoss += logAll - (logq[sentLevel] - max);
  const code = ax.codes[sentLevel];
  for (let i = 0; i < ax.bits; i++) {
    const mask = 1 << (ax.bits - 1 - i);
    const own = code & mask;
    const other = own ^ mask;
    if (ax.exact) {
      // The two subsets partition the levels, so ln(1 + e^(−λ)) = ln(Σ_all q / Σ_own q): one
      // logarithm from the shared exponentials (measured: the GMI about 2× faster) unless the
      // own subset's sum nears underflow, which the log-sum-exp path below handles.
      let ownSum = 0;
      for (let l = 0; l < L; l++) if ((ax.codes[l] & mask) === own) ownSum += q[l];
      if (ownSum > 1e-280) {
        ax.bitLoss += logAll - Math.log(ownSum);
        continue;
      }
    }
    let lOwn: number;
    let lOther: number;
    if (ax.exact) {
      lOwn = subsetLog(q, logq, max, ax.codes, L, mask, own);
      lOther = subsetLog(q, logq, max, ax.codes, L, mask, other);
    } else {
      lOwn = maxOver(logq, ax.codes, L, mask, own);
      lOther = maxOver(logq, ax.codes, L, mask, other);
    }
    // ln(1 + e^(−λ)), λ = lOwn − lOther, without overflow.
    const x = lOther - lOwn;
    ax.bitLoss += x > 0 ? x + Math.log1p(Math.exp(-x)) : Math.log1p(Math.exp(x));
  }
}

// ln Σ e^(v[l]) over the levels whose code has (code & mask) === want, from the shared
// exponentials q[l] = e^(v[l] − max). A subset far below the maximum (its sum under
// 1e-280, near underflow) is summed again around its own maximum.
function subsetLog(
  q: Float64Array,
  v: Float64Array,
  max: number,
  codes: Uint8Array,
  L: number,
  mask: number,
  want: number,
): number {
  let s = 0;
  for (let l = 0; l < L; l++) if ((codes[l] & mask) === want) s += q[l];
  if (s > 1e-280) return max + Math.log(s);
  const own = maxOver(v, codes, L, mask, want);
  s = 0;
  for (let l = 0; l < L; l++) if ((codes[l] & mask) === want) s += Math.exp(v[l] - own);
  return own + Math.log(s);
}

function maxOver(v: Float64Array, codes: Uint8Array, L: number, mask: number, want: number): number {
  let max = Number.NEGATIVE_INFINITY;
  for (let l = 0; l < L; l++) if ((codes[l] & mask) === want && v[l] > max) max = v[l];
  return max;
}
