import {
  type ComplexArray,
  type Constellation,
  complexArray,
  constellation,
  type DualPol,
  decide,
  MODULATIONS,
  type ModulationName,
  OptionError,
} from '@intradyne/core';
import type { Interval } from '../counting/clopper-pearson.js';
import { countErrors, errorRatio } from '../counting/error-count.js';
import { referenceLabels } from '../counting/reference-labels.js';
import { airBitsPerSecond } from '../information/air.js';
import { type BitMetric, informationEstimate } from '../information/bit-metrics.js';
import { constellationPower, type EvmNormalization, errorPower } from '../quality/evm.js';
import { leastSquaresGain } from '../quality/gain.js';
import { qFactorDb, toDb } from '../quality/snr.js';
import { type PolAlignment, type PolName, type SyncOptions, type SyncResult, synchronize } from '../sync/synchronize.js';

/** Options of {@link measure}; the synchronization options apply too. */
export interface MeasureOptions extends SyncOptions {
  /** EVM normalized to the average (default) or peak constellation power. */
  readonly evmNormalization?: EvmNormalization;
  /** Bit metrics of the GMI: exact log-sum-exp (default) or max-log. */
  readonly bitMetric?: BitMetric;
  /** Symbol rate, Bd: when given, the AIR in bit/s is reported. */
  readonly symbolRate?: number;
  /** Keep the aligned, normalized symbols in the result (for constellation plots), default false. */
  readonly keepAligned?: boolean;
}

/** One polarization's symbols as measured, from `skipSymbols` on: N = Nr − skipSymbols of each. */
export interface AlignedSymbols {
  /** Received symbols with rotation and conjugation undone, divided by the gain (unit constellation scale). */
  readonly received: ComplexArray;
  /** The transmitted points they are compared with. */
  readonly reference: ComplexArray;
  /** The transmitted labels. */
  readonly labels: Uint8Array;
}

/** The figures reported per polarization and in total. */
export interface QualityFigures {
  /** Bit error ratio; with zero errors the upper end of `berCi95` (see `berIsUpperBound`). */
  readonly ber: number;
  /** Clopper–Pearson 95 % interval of the BER. */
  readonly berCi95: Interval;
  /** True when no bit error was seen and `ber` is an upper bound. */
  readonly berIsUpperBound: boolean;
  /** Bit errors counted. */
  readonly bitErrors: number;
  /** Bits compared. */
  readonly bits: number;
  /** Symbol error ratio; with zero errors the upper end of `serCi95`. */
  readonly ser: number;
  /** Clopper–Pearson 95 % interval of the SER. */
  readonly serCi95: Interval;
  /** Symbol errors counted. */
  readonly symbolErrors: number;
  /** Symbols compared. */
  readonly symbols: number;
  /** Data-aided rms EVM, a fraction, normalized as `evmNormalization`. */
  readonly evmRms: number;
  /** Data-aided SNR (Es/N0), dB: Σ|a|² / Σ|z − a|² (Infinity for a noiseless stream). */
  readonly snrDb: number;
  /** SNR from the EVM against the average constellation power, 1/EVM², dB. */
  readonly snrFromEvmDb: number;
  /** Q-factor from `ber`, dB (a lower bound when `berIsUpperBound`); null when the BER is 0.5 or more. */
  readonly qDb: number | null;
  /** Bit-wise GMI, bits per symbol per polarization (log2 M for a noiseless stream). */
  readonly gmi: number;
  /** GMI / log2 M. */
  readonly ngmi: number;
  /** Symbol-wise MI, bits per symbol per polarization. */
  readonly mi: number;
}

/** One polarization's figures with what was fitted. */
export interface PolMeasurement extends QualityFigures {
  /** Least-squares gain ĝ the received symbols were divided by. */
  readonly gain: number;
  /** Noise variance per complex symbol of the fitted Gaussian channel, at unit constellation power. */
  readonly noiseVariance: number;
  /** Synchronization findings of this polarization. */
  readonly alignment: PolAlignment;
}

/** The result of {@link measure}: totals over both polarizations, and each polarization. */
export interface Measurement extends QualityFigures {
  /** The modulation measured against. */
  readonly modulation: ModulationName;
  /** The same figures for each polarization. */
  readonly perPol: {
    /** Received x polarization. */
    readonly x: PolMeasurement;
    /** Received y polarization. */
    readonly y: PolMeasurement;
  };
  /** Synchronization findings: delay, swap, rotation per polarization, conjugation. */
  readonly sync: SyncResult;
  /** (GMIₓ + GMIᵧ)·Rs, bit/s, when `symbolRate` was given; otherwise null. */
  readonly airBitsPerSecond: number | null;
  /** How `evmRms` was normalized. */
  readonly evmNormalization: EvmNormalization;
  /** How the GMI's bit metrics were computed (exact or max-log). */
  readonly bitMetric: BitMetric;
  /** The aligned symbols per polarization when `keepAligned` was set; otherwise null. */
  readonly aligned: {
    /** Received x with its reference. */
    readonly x: AlignedSymbols;
    /** Received y with its reference. */
    readonly y: AlignedSymbols;
  } | null;
}

/**
 * Thrown by {@link measure} when the reference was not found in the received
 * symbols: no figure is valid then. `sync` holds what was found.
 * @example try { measure(rx, ref, 'qpsk'); } catch (e) { if (e instanceof ReferenceNotFoundError) console.log(e.sync.reason); }
 */
export class ReferenceNotFoundError extends Error {
  /** Always 'ReferenceNotFoundError'. */
  override readonly name = 'ReferenceNotFoundError';
  constructor(
    /** What the synchronization found, with its reason. */
    readonly sync: SyncResult,
  ) {
    super(`measure: the reference was not found: ${sync.reason}`);
  }
}

const NAME = 'measure';

/**
 * Measures received symbols against the transmitted reference: the one call
 * a receiver makes after its decisions stage.
 *
 * Steps, per polarization: {@link synchronize} (delay, swap, k·π/2, conjugation;
 * the first `skipSymbols` are left out of everything); undo the rotation and
 * conjugation; normalize by the real least-squares gain against the aligned
 * reference points, ĝ = Re Σ r·conj(a) / Σ|a|² (the received symbols may
 * have any scale; a residual phase stays in the error); then hard decisions
 * (BER, SER, exact 95 % intervals), data-aided EVM and SNR, Q from the BER,
 * and GMI/MI under a Gaussian channel fitted to the data (noise variance
 * σ̂² = mean |z − a|² per polarization). Totals pool the counts and error
 * powers of both polarizations; total GMI and MI are the mean per
 * polarization (bits per symbol per polarization).
 * @param received received symbols, Nr per polarization (e.g. after carrier recovery)
 * @param reference transmitted symbols, Nt per polarization, any scale; periodic when Nt < Nr
 * @throws ReferenceNotFoundError when synchronization fails; OptionError for bad options;
 *   RangeError for non-finite symbols, too few symbols, or a reference not made of the modulation's points
 * @example const m = measure(rx, cap.reference, '16qam', { skipSymbols: 2000, symbolRate: 32e9 }); m.ber; m.perPol.y.gmi;
 */
export function measure(
  received: DualPol,
  reference: DualPol,
  modulation: ModulationName,
  options: MeasureOptions = {},
): Measurement {
  if (!MODULATIONS.includes(modulation))
    throw new OptionError(NAME, 'modulation', `one of ${MODULATIONS.join(', ')}`, modulation);
  const evmNormalization = options.evmNormalization ?? 'average';
  if (evmNormalization !== 'average' && evmNormalization !== 'peak') {
    throw new OptionError(NAME, 'evmNormalization', "'average' or 'peak'", evmNormalization);
  }
  const bitMetric = options.bitMetric ?? 'exact';
  if (bitMetric !== 'exact' && bitMetric !== 'max-log')
    throw new OptionError(NAME, 'bitMetric', "'exact' or 'max-log'", bitMetric);
  const symbolRate = options.symbolRate;
  if (symbolRate !== undefined && !(symbolRate > 0 && Number.isFinite(symbolRate))) {
    throw new OptionError(NAME, 'symbolRate', 'a positive symbol rate in Bd', symbolRate);
  }
  for (const p of ['x', 'y'] as const) {
    requireFinite(received[p], `received ${p}`);
    requireFinite(reference[p], `reference ${p}`);
  }
  const c = constellation(modulation);
  const sync = synchronize(received, reference, options);
  if (!sync.found) throw new ReferenceNotFoundError(sync);
  const labels = { x: referenceLabels(c, reference.x), y: referenceLabels(c, reference.y) };
  const parts = {
    x: measurePolarization(c, received.x, labels, sync.perPol.x, sync.skipSymbols, evmNormalization, bitMetric),
    y: measurePolarization(c, received.y, labels, sync.perPol.y, sync.skipSymbols, evmNormalization, bitMetric),
  };
  const total = figures(
    c,
    {
      bitErrors: parts.x.counts.bitErrors + parts.y.counts.bitErrors,
      bits: parts.x.counts.bits + parts.y.counts.bits,
      symbolErrors: parts.x.counts.symbolErrors + parts.y.counts.symbolErrors,
      symbols: parts.x.counts.symbols + parts.y.counts.symbols,
    },
    parts.x.errorEnergy + parts.y.errorEnergy,
    parts.x.signalEnergy + parts.y.signalEnergy,
    0.5 * (parts.x.figures.gmi + parts.y.figures.gmi),
    0.5 * (parts.x.figures.mi + parts.y.figures.mi),
    evmNormalization,
  );
  return {
    ...total,
    modulation,
    perPol: { x: parts.x.result, y: parts.y.result },
    sync,
    airBitsPerSecond: symbolRate === undefined ? null : airBitsPerSecond(parts.x.figures.gmi, parts.y.figures.gmi, symbolRate),
    evmNormalization,
    bitMetric,
    aligned: options.keepAligned ? { x: parts.x.aligned, y: parts.y.aligned } : null,
  };
}

interface PolPart {
  counts: ReturnType<typeof countErrors>;
  errorEnergy: number;
  signalEnergy: number;
  figures: QualityFigures;
  result: PolMeasurement;
  aligned: AlignedSymbols;
}

function measurePolarization(
  c: Constellation,
  rx: ComplexArray,
  labels: Record<PolName, Uint8Array>,
  a: PolAlignment,
  skip: number,
  evmNormalization: EvmNormalization,
  bitMetric: BitMetric,
): PolPart {
  const nr = rx.length >> 1;
  const n = nr - skip;
  const refLabels = labels[a.source];
  const nt = refLabels.length;
  const z = complexArray(n);
  const ref = complexArray(n);
  const sent = new Uint8Array(n);
  const k = a.quarterTurns;
  const conj = a.conjugated ? -1 : 1;
  let j = (((skip - a.delay) % nt) + nt) % nt;
  for (let i = 0; i < n; i++) {
    const re = rx[2 * (skip + i)];
    const im = rx[2 * (skip + i) + 1];
    // Undo e^(jkπ/2), then the conjugation: r' = conj?(e^(−jkπ/2)·r).
    let ur = re;
    let ui = im;
    if (k === 1) {
      ur = im;
      ui = -re;
    } else if (k === 2) {
      ur = -re;
      ui = -im;
    } else if (k === 3) {
      ur = -im;
      ui = re;
    }
    z[2 * i] = ur;
    z[2 * i + 1] = conj * ui;
    const label = refLabels[j];
    sent[i] = label;
    ref[2 * i] = c.points[2 * label];
    ref[2 * i + 1] = c.points[2 * label + 1];
    if (++j === nt) j = 0;
  }
  const gain = leastSquaresGain(z, ref);
  if (!(gain > 0)) throw new RangeError(`${NAME}: the least-squares gain of the aligned symbols is ${gain}, not positive`);
  for (let i = 0; i < z.length; i++) z[i] /= gain;
  const counts = countErrors(c, decide(c, z), sent);
  const errorEnergy = errorPower(z, ref);
  let signalEnergy = 0;
  for (let i = 0; i < ref.length; i++) signalEnergy += ref[i] * ref[i];
  const noiseVariance = errorEnergy / n;
  // A noiseless stream: the information is log2 M; the Gaussian fit needs σ² > 0.
  const info =
    noiseVariance > 0 ? informationEstimate(c, z, sent, noiseVariance, bitMetric) : { gmi: c.bitsPerSymbol, mi: c.bitsPerSymbol };
  const f = figures(c, counts, errorEnergy, signalEnergy, info.gmi, info.mi, evmNormalization);
  return {
    counts,
    errorEnergy,
    signalEnergy,
    figures: f,
    result: { ...f, gain, noiseVariance, alignment: a },
    aligned: { received: z, reference: ref, labels: sent },
  };
}

function figures(
  c: Constellation,
  counts: ReturnType<typeof countErrors>,
  errorEnergy: number,
  signalEnergy: number,
  gmi: number,
  mi: number,
  evmNormalization: EvmNormalization,
): QualityFigures {
  const ber = errorRatio(counts.bitErrors, counts.bits);
  const ser = errorRatio(counts.symbolErrors, counts.symbols);
  const meanError = errorEnergy / counts.symbols;
  const evmAverage = Math.sqrt(meanError / constellationPower(c, 'average'));
  return {
    ber: ber.ratio,
    berCi95: ber.ci95,
    berIsUpperBound: ber.isUpperBound,
    bitErrors: counts.bitErrors,
    bits: counts.bits,
    ser: ser.ratio,
    serCi95: ser.ci95,
    symbolErrors: counts.symbolErrors,
    symbols: counts.symbols,
    evmRms: evmNormalization === 'average' ? evmAverage : Math.sqrt(meanError / constellationPower(c, 'peak')),
    snrDb: toDb(signalEnergy / errorEnergy),
    snrFromEvmDb: toDb(1 / (evmAverage * evmAverage)),
    qDb: ber.ratio < 0.5 ? qFactorDb(ber.ratio) : null,
    gmi,
    ngmi: gmi / c.bitsPerSymbol,
    mi,
  };
}

function requireFinite(a: ComplexArray, what: string): void {
  for (let i = 0; i < a.length; i++) {
    if (!Number.isFinite(a[i])) throw new RangeError(`${NAME}: ${what} symbol ${i >> 1} is not finite (${a[i]})`);
  }
}
