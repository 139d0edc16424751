import type { ComplexArray, Constellation, ModulationName } from '@intradyne/core';
import type { Interval } from '../counting/clopper-pearson.js';
import { type ErrorCount, errorRatio } from '../counting/error-count.js';
import { airBitsPerSecond, normalizedGmi } from '../information/air.js';
import type { BitMetric } from '../information/bit-metrics.js';
import { constellationPower, type EvmNormalization } from '../quality/evm.js';
import { qFactorDb, toDb } from '../quality/snr.js';
import type { PolAlignment, SyncResult } from '../sync/synchronize.js';
import type { SlipCorrection, Validated } from './options.js';
import type { PolarizationTally } from './tally.js';

/** Bit and symbol error figures, as counted one way (see {@link QualityFigures.uncorrected}). */
export interface ErrorFigures {
  /** Bit error ratio; with zero errors the upper end of `berCi95` (see `berIsUpperBound`). */
  readonly ber: number;
  /** Clopper–Pearson 95 % interval of the BER. */
  readonly berCi95: Interval;
  /** True when no bit error was seen and `ber` is an upper bound. */
  readonly berIsUpperBound: boolean;
  /** Bit errors counted. */
  readonly bitErrors: number;
  /** Symbol error ratio; with zero errors the upper end of `serCi95`. */
  readonly ser: number;
  /** Clopper–Pearson 95 % interval of the SER. */
  readonly serCi95: Interval;
  /** Symbol errors counted. */
  readonly symbolErrors: number;
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
  /**
   * The errors counted with the first block's quarter turn for the whole
   * stream: what a receiver without slip correction would see. The
   * headline figures are these with {@link MeasureOptions.slipCorrection}
   * 'none'.
   */
  readonly uncorrected: ErrorFigures;
  /**
   * The errors counted with each block at its own best quarter turn. The
   * headline figures are these with 'per-block' slip correction (the
   * default); equal to `uncorrected` when no block needed another turn.
   */
  readonly blockCorrected: ErrorFigures;
}

/** One polarization's figures with what was fitted. */
export interface PolMeasurement extends QualityFigures {
  /** Least-squares gain ĝ the received symbols were divided by. */
  readonly gain: number;
  /** Noise variance per complex symbol of the fitted Gaussian channel, at unit constellation power. */
  readonly noiseVariance: number;
  /** Synchronization findings of this polarization. */
  readonly alignment: PolAlignment;
  /**
   * Normalized fourth moment E|z|⁴/(E|z|²)² of the aligned, normalized
   * received symbols (1 for QPSK, 1.32 for 16QAM without noise; Gaussian
   * noise pulls it towards 2).
   */
  readonly fourthMoment: number;
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
  /** How the π/2 ambiguity was resolved along the stream, and how often it changed. */
  readonly slipCorrection: {
    /** 'per-block' or 'none' (the headline figures; `uncorrected` holds the other count). */
    readonly mode: SlipCorrection;
    /** Measured symbols per block. */
    readonly blockSymbols: number;
    /** Blocks whose best quarter turn differed from the first block's, per polarization. */
    readonly turnedBlocks: {
      /** Of the x polarization. */
      readonly x: number;
      /** Of the y polarization. */
      readonly y: number;
    };
  };
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

/** The measurement's result from what was fitted and the tallies of both polarizations (which it finishes). */
export function assemble(
  sync: SyncResult,
  tally: { x: PolarizationTally; y: PolarizationTally },
  modulation: ModulationName,
  o: Validated,
): Measurement {
  tally.x.finish();
  tally.y.finish();
  const { c } = tally.x;
  const fx = tally.x.figures(o.evmNormalization);
  const fy = tally.y.figures(o.evmNormalization);
  const pol = (t: PolarizationTally, f: QualityFigures): PolMeasurement => {
    const n = t.symbols;
    return {
      ...f,
      gain: t.fit.gain,
      noiseVariance: t.fit.noiseVariance,
      alignment: t.fit.alignment,
      fourthMoment: t.m4 / n / (t.m2 / n) ** 2,
    };
  };
  const pooled = (a: ErrorCount, b: ErrorCount): ErrorCount => ({
    bitErrors: a.bitErrors + b.bitErrors,
    bits: a.bits + b.bits,
    symbolErrors: a.symbolErrors + b.symbolErrors,
    symbols: a.symbols + b.symbols,
  });
  const total = figures(
    c,
    pooled(tally.x.counts(), tally.y.counts()),
    {
      uncorrected: pooled(tally.x.countsOf('uncorrected'), tally.y.countsOf('uncorrected')),
      corrected: pooled(tally.x.countsOf('corrected'), tally.y.countsOf('corrected')),
    },
    tally.x.errorEnergyAtOwnGain() + tally.y.errorEnergyAtOwnGain(),
    tally.x.signalEnergy + tally.y.signalEnergy,
    0.5 * (fx.gmi + fy.gmi),
    0.5 * (fx.mi + fy.mi),
    o.evmNormalization,
  );
  return {
    ...total,
    modulation,
    perPol: { x: pol(tally.x, fx), y: pol(tally.y, fy) },
    sync,
    slipCorrection: {
      mode: o.slipCorrection,
      blockSymbols: o.slipBlockSymbols,
      turnedBlocks: { x: tally.x.turnedBlocks, y: tally.y.turnedBlocks },
    },
    airBitsPerSecond: o.symbolRate === undefined ? null : airBitsPerSecond(fx.gmi, fy.gmi, o.symbolRate),
    evmNormalization: o.evmNormalization,
    bitMetric: o.bitMetric,
    aligned: null,
  };
}

/** The figures of one count, its error and signal energies and its information. */
export function figures(
  c: Constellation,
  counts: ErrorCount,
  both: { uncorrected: ErrorCount; corrected: ErrorCount },
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
    ngmi: normalizedGmi(c, gmi),
    mi,
    uncorrected: errorFigures(both.uncorrected),
    blockCorrected: errorFigures(both.corrected),
  };
}

function errorFigures(counts: ErrorCount): ErrorFigures {
  const ber = errorRatio(counts.bitErrors, counts.bits);
  const ser = errorRatio(counts.symbolErrors, counts.symbols);
  return {
    ber: ber.ratio,
    berCi95: ber.ci95,
    berIsUpperBound: ber.isUpperBound,
    bitErrors: counts.bitErrors,
    ser: ser.ratio,
    serCi95: ser.ci95,
    symbolErrors: counts.symbolErrors,
  };
}
