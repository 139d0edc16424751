import { type ComplexArray, complexArray, type DualPol, fft, OptionError } from '@intradyne/core';
import { ReferenceMismatchError } from '../counting/reference-mismatch.js';
import { blockCorrelation, checkScratch, coherentCheck, disagreements } from './candidates.js';
import { FULL_PERIOD_SYMBOLS, MAX_TIED_DELAYS, MIN_SYNC_SYMBOLS, SEGMENT_SYMBOLS, SYNC_BLOCK_SYMBOLS } from './constants.js';
import { circularCorrelation, foldOntoPeriod } from './correlation.js';
import type { ReferenceSource } from './reference-source.js';
import { segmentPeaks, sequenceReader } from './segment-search.js';
import type { PolAlignment, PolName, SyncMethod, SyncOptions, SyncResult } from './synchronize.js';

const NAME = 'synchronize';

interface Candidate {
  delay: number;
  re: number;
  im: number;
  correlation: number;
  peakToFloor: number;
  conjugated: boolean;
  /** Other delays that fit the leading segment as well (same conjugation): a repeated pattern. */
  rivals: readonly number[];
  /** True when more than {@link MAX_TIED_DELAYS} delays fit it as well: the delay is not trusted. */
  ambiguous: boolean;
}
/** The outcome of a search, and whether more received symbols could still change it. */
export interface SyncOutcome {
  /** What was found. */
  readonly result: SyncResult;
  /**
   * False when a delay that fits as well as the one found names the same
   * reference symbols for all but fewer than {@link SYNC_BLOCK_SYMBOLS} of
   * the used symbols: later symbols may still tell them apart.
   */
  readonly settled: boolean;
}

/**
 * {@link synchronize} on a reference source with validated options.
 * @throws RangeError as {@link synchronize}
 */
export function synchronizeSource(received: DualPol, source: ReferenceSource, o: Required<SyncOptions>): SyncOutcome {
  const nr = received.x.length >> 1;
  const nt = source.length;
  if (received.y.length >> 1 !== nr)
    throw new RangeError(`${NAME}: received x has ${nr} symbols, y has ${received.y.length >> 1}`);
  if (nt < MIN_SYNC_SYMBOLS)
    throw new ReferenceMismatchError(`${NAME}: the reference needs at least ${MIN_SYNC_SYMBOLS} symbols, it has ${nt}`);
  const used = nr - o.skipSymbols;
  if (used < MIN_SYNC_SYMBOLS) {
    throw new RangeError(
      `${NAME}: ${MIN_SYNC_SYMBOLS} received symbols are needed after skipping ${o.skipSymbols}, ${Math.max(used, 0)} remain`,
    );
  }
  const outcome = (best: Candidates, method: SyncMethod): SyncOutcome | null => {
    const a = assign(best, o);
    if (a.reasons.length > 0) return null;
    return { result: result(a, method, nt, used, o), settled: settled(best, a, source, o.skipSymbols, nr) };
  };
  const coherentBest = search(received, source, o, used, 'coherent');
  const coherent = outcome(coherentBest, 'coherent');
  if (coherent) return coherent;
  const differential = outcome(search(received, source, o, used, 'differential'), 'differential');
  if (differential) return differential;
  return { result: result(assign(coherentBest, o), 'coherent', nt, used, o), settled: true };
}

/** True unless an assigned delay has a rival that names the same symbols for all but a few used ones. */
function settled(best: Candidates, a: Assignment, source: ReferenceSource, start: number, nr: number): boolean {
  for (const p of ['x', 'y'] as const) {
    const q = a.perPol[p].source;
    const c = best[p][q];
    for (const rival of c.rivals) {
      if (disagreements(source, q, start, nr, c.delay, rival, SYNC_BLOCK_SYMBOLS) < SYNC_BLOCK_SYMBOLS) return false;
    }
  }
  return true;
}

type Candidates = Record<PolName, Record<PolName, Candidate>>;

/** The best candidate for every pair (received polarization, reference polarization), by one method. */
function search(
  received: DualPol,
  source: ReferenceSource,
  o: Required<SyncOptions>,
  used: number,
  method: SyncMethod,
): Candidates {
  return source.length <= FULL_PERIOD_SYMBOLS
    ? fullPeriodSearch(received, source, o, used, method)
    : segmentSearch(received, source, o, used, method);
}

/** The whole used stream folded onto one period and correlated with the whole reference. */
function fullPeriodSearch(
  received: DualPol,
  source: ReferenceSource,
  o: Required<SyncOptions>,
  used: number,
  method: SyncMethod,
): Candidates {
  const nt = source.length;
  const read = (q: PolName) => {
    const t = complexArray(nt);
    source.read(q, 0, nt, t);
    return method === 'coherent' ? t : adjacentProducts(t, true);
  };
  const refs = { x: read('x'), y: read('y') };
  const refSpectra = { x: fft(refs.x), y: fft(refs.y) };
  const best = { x: {}, y: {} } as Candidates;
  // Every array below is as long as the reference: one set serves all eight correlations.
  const folded = complexArray(nt);
  const foldedSpectrum = complexArray(nt);
  const scratch = { prod: complexArray(nt), out: complexArray(nt) };
  const check = checkScratch();
  for (const p of ['x', 'y'] as const) {
    // The products start one symbol later: the first has no predecessor among the used symbols.
    const stream = method === 'coherent' ? received[p] : adjacentProducts(received[p], false);
    const start = method === 'coherent' ? o.skipSymbols : o.skipSymbols + 1;
    const count = method === 'coherent' ? used : used - 1;
    foldOntoPeriod(stream, start, nt, folded);
    fft(folded, foldedSpectrum);
    const foldedEnergy = energy(folded);
    for (const q of ['x', 'y'] as const) {
      const correlate = (conjugate: boolean) => circularCorrelation(foldedSpectrum, refSpectra[q], conjugate, scratch);
      const plain = peak(correlate(false), start, count, foldedEnergy, refs[q], false);
      const conj = peak(correlate(true), start, count, foldedEnergy, refs[q], true);
      const c = conj.correlation > plain.correlation ? conj : plain;
      best[p][q] =
        method === 'coherent'
          ? c
          : { ...c, ...blockCorrelation(received[p], o.skipSymbols, source, q, c.delay, c.conjugated, check) };
    }
  }
  return best;
}

/**
 * A leading segment of the used stream correlated with the reference block
 * by block; the delays that fit it as well as the peak checked over every used symbol.
 */
function segmentSearch(
  received: DualPol,
  source: ReferenceSource,
  o: Required<SyncOptions>,
  used: number,
  method: SyncMethod,
): Candidates {
  const differential = method === 'differential';
  // The products start one symbol later: the first has no predecessor among the used symbols.
  const start = differential ? o.skipSymbols + 1 : o.skipSymbols;
  const length = Math.min(differential ? used - 1 : used, SEGMENT_SYMBOLS);
  const segment = (rx: ComplexArray) => {
    const s = complexArray(length);
    for (let m = 0; m < length; m++) {
      const k = start + m;
      const ar = rx[2 * k];
      const ai = rx[2 * k + 1];
      if (!differential) {
        s[2 * m] = ar;
        s[2 * m + 1] = ai;
        continue;
      }
      // zₖ·z*ₖ₋₁
      const br = rx[2 * k - 2];
      const bi = rx[2 * k - 1];
      s[2 * m] = ar * br + ai * bi;
      s[2 * m + 1] = ai * br - ar * bi;
    }
    return s;
  };
  const peaks = segmentPeaks(
    { x: segment(received.x), y: segment(received.y) },
    start,
    source.length,
    sequenceReader(source, differential),
  );
  const scratch = checkScratch();
  const best = { x: {}, y: {} } as Candidates;
  for (const p of ['x', 'y'] as const) {
    for (const q of ['x', 'y'] as const) {
      let chosen: Candidate | null = null;
      for (const conjugated of [false, true]) {
        const pk = peaks[p][q][conjugated ? 'conj' : 'plain'];
        const top = pk.magnitudes.indexOf(Math.max(...pk.magnitudes));
        // Below the threshold the pair is not the reference: its near-peak delays are noise, not copies.
        const significant = pk.floor > 0 ? pk.magnitudes[top] / pk.floor >= o.minPeakToFloor : pk.magnitudes[top] > 0;
        const delays = significant ? pk.delays : [pk.delays[top]];
        for (const delay of delays) {
          const check = differential
            ? blockCorrelation(received[p], o.skipSymbols, source, q, delay, conjugated, scratch)
            : coherentCheck(received[p], o.skipSymbols, source, q, delay, conjugated, scratch);
          if (chosen !== null && !(check.correlation > chosen.correlation)) continue;
          const m = pk.magnitudes[pk.delays.indexOf(delay)];
          chosen = {
            delay,
            ...check,
            peakToFloor: pk.floor > 0 ? m / pk.floor : m > 0 ? Number.POSITIVE_INFINITY : 0,
            conjugated,
            rivals: delays.filter((d) => d !== delay),
            ambiguous: significant && pk.overflow,
          };
        }
      }
      best[p][q] = chosen as Candidate;
    }
  }
  return best;
}

interface Assignment {
  swapped: boolean;
  perPol: Record<PolName, PolAlignment>;
  reasons: string[];
}

/** The consistent assignment (straight or swapped) with the larger peaks, and why a polarization was not found. */
function assign(best: Candidates, o: Required<SyncOptions>): Assignment {
  const straight = best.x.x.correlation + best.y.y.correlation;
  const crossed = best.x.y.correlation + best.y.x.correlation;
  // Swap only on a clear margin: a tie means both assignments measure the same.
  const swapped = crossed > straight + 0.05;
  const align = (p: PolName): PolAlignment => {
    const q: PolName = swapped ? (p === 'x' ? 'y' : 'x') : p;
    return alignment(q, best[p][q], o);
  };
  const perPol = { x: align('x'), y: align('y') };
  const reasons: string[] = [];
  for (const p of ['x', 'y'] as const) {
    const a = perPol[p];
    if (a.found) continue;
    let why =
      `received ${p}: reference ${a.source} not found (correlation peak ${a.correlation.toFixed(3)}, ` +
      `threshold ${o.minCorrelation}; peak-to-floor ${a.peakToFloor.toFixed(1)}, threshold ${o.minPeakToFloor})`;
    if (best[p][a.source].ambiguous) {
      why +=
        `; more than ${MAX_TIED_DELAYS} delays fit the first ${SEGMENT_SYMBOLS} symbols as well as the peak: ` +
        'the reference repeats a shorter pattern many times (give one period of the pattern as the reference)';
    }
    const other = p === 'x' ? 'y' : 'x';
    const alt = alignment(a.source === 'x' ? 'y' : 'x', best[p][a.source === 'x' ? 'y' : 'x'], o);
    if (alt.found && perPol[other].source === alt.source) {
      why += `; it carries reference ${alt.source}, as received ${other} does: both outputs converged to one source (singularity)`;
    }
    reasons.push(why);
  }
  return { swapped, perPol, reasons };
}

function result(a: Assignment, method: SyncMethod, nt: number, used: number, o: Required<SyncOptions>): SyncResult {
  return {
    found: a.reasons.length === 0,
    method,
    reason: a.reasons.length === 0 ? null : a.reasons.join('; '),
    swapped: a.swapped,
    perPol: a.perPol,
    referenceLength: nt,
    symbolsUsed: used,
    skipSymbols: o.skipSymbols,
    minCorrelation: o.minCorrelation,
    minPeakToFloor: o.minPeakToFloor,
  };
}

/**
 * dₙ = zₙ·z*ₙ₋₁ for every n (d₀ = 0 for a stream; z₀·z*_{N−1} for a
 * periodic reference, `circular`).
 */
function adjacentProducts(z: ComplexArray, circular: boolean): ComplexArray {
  const n = z.length >> 1;
  const d = complexArray(n);
  for (let k = circular ? 0 : 1; k < n; k++) {
    const j = k === 0 ? n - 1 : k - 1;
    const ar = z[2 * k];
    const ai = z[2 * k + 1];
    const br = z[2 * j];
    const bi = z[2 * j + 1];
    d[2 * k] = ar * br + ai * bi;
    d[2 * k + 1] = ai * br - ar * bi;
  }
  return d;
}

function alignment(source: PolName, c: Candidate, o: Required<SyncOptions>): PolAlignment {
  const theta = Math.atan2(c.im, c.re);
  const k = ((Math.round(theta / (Math.PI / 2)) % 4) + 4) % 4;
  let residual = theta - (k * Math.PI) / 2;
  if (residual > Math.PI) residual -= 2 * Math.PI;
  if (residual < -Math.PI) residual += 2 * Math.PI;
  return {
    source,
    delay: c.delay,
    quarterTurns: k as 0 | 1 | 2 | 3,
    rotationRad: (k * Math.PI) / 2,
    conjugated: c.conjugated,
    correlation: c.correlation,
    peakToFloor: c.peakToFloor,
    residualPhaseRad: residual,
    found: !c.ambiguous && c.correlation >= o.minCorrelation && c.peakToFloor >= o.minPeakToFloor,
  };
}

// The largest |c[D]|, normalized by Cauchy–Schwarz over the occupied bins, and its ratio to the rms of the others.
function peak(
  c: ComplexArray,
  start: number,
  used: number,
  foldedEnergy: number,
  ref: ComplexArray,
  conjugated: boolean,
): Candidate {
  const n = c.length >> 1;
  let bestD = 0;
  let best2 = -1;
  let total2 = 0;
  for (let d = 0; d < n; d++) {
    const m2 = c[2 * d] ** 2 + c[2 * d + 1] ** 2;
    total2 += m2;
    if (m2 > best2) {
      best2 = m2;
      bestD = d;
    }
  }
  // Reference energy over the bins the received stream occupies (all of them, or the
  // `used` bins from start mod Nt on), at the peak delay.
  let refEnergy = 0;
  const occupied = Math.min(used, n);
  for (let i = 0, m = start % n; i < occupied; i++, m = m + 1 === n ? 0 : m + 1) {
    const j = (m - bestD + n) % n;
    refEnergy += ref[2 * j] ** 2 + ref[2 * j + 1] ** 2;
  }
  const norm = Math.sqrt(foldedEnergy * refEnergy);
  const floor = Math.sqrt(Math.max(total2 - best2, 0) / (n - 1));
  const mag = Math.sqrt(best2);
  return {
    delay: bestD,
    re: c[2 * bestD],
    im: c[2 * bestD + 1],
    correlation: norm > 0 ? Math.min(1, mag / norm) : 0,
    peakToFloor: floor > 0 ? mag / floor : mag > 0 ? Number.POSITIVE_INFINITY : 0,
    conjugated,
    rivals: [],
    ambiguous: false,
  };
}

function energy(a: ComplexArray): number {
  let e = 0;
  for (let i = 0; i < a.length; i++) e += a[i] * a[i];
  return e;
}

/**
 * Options of {@link synchronize} with their defaults, checked.
 * @throws OptionError for a bad option
 */
export function validateSyncOptions(options: SyncOptions): Required<SyncOptions> {
  const skipSymbols = options.skipSymbols ?? 0;
  if (!Number.isSafeInteger(skipSymbols) || skipSymbols < 0) {
    throw new OptionError(NAME, 'skipSymbols', 'a non-negative integer', skipSymbols);
  }
  const minCorrelation = options.minCorrelation ?? 0.2;
  if (!(minCorrelation > 0 && minCorrelation < 1))
    throw new OptionError(NAME, 'minCorrelation', 'a number in (0, 1)', minCorrelation);
  const minPeakToFloor = options.minPeakToFloor ?? 6;
  if (!(minPeakToFloor > 1) || !Number.isFinite(minPeakToFloor)) {
    throw new OptionError(NAME, 'minPeakToFloor', 'a finite number > 1', minPeakToFloor);
  }
  return { skipSymbols, minCorrelation, minPeakToFloor };
}
