import { type ComplexArray, checkModulation, type ModulationName, OptionError } from '@intradyne/core';
import type { BitMetric } from '../information/bit-metrics.js';
import type { EvmNormalization } from '../quality/evm.js';
import type { SyncOptions } from '../sync/synchronize.js';

export const NAME = 'measure';

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
  /**
   * How the π/2 ambiguity is resolved along the stream. 'per-block' (the
   * default): each block of `slipBlockSymbols` measured symbols is turned by
   * the quarter turn that best fits the reference there, so that a cycle
   * slip costs the symbols of one block instead of every symbol after it;
   * 'none': the quarter turn of the first block holds for the whole stream
   * (every symbol after a slip counts as wrong). Both counts are always
   * reported too ({@link QualityFigures.uncorrected} and
   * {@link QualityFigures.blockCorrected}).
   */
  readonly slipCorrection?: SlipCorrection;
  /** Measured symbols per block of the 'per-block' slip correction (integer ≥ 16, default 512). */
  readonly slipBlockSymbols?: number;
}

/** How the measurement resolves the π/2 ambiguity along the stream (see {@link MeasureOptions.slipCorrection}). */
export type SlipCorrection = 'per-block' | 'none';

/** Default {@link MeasureOptions.slipBlockSymbols}: a slip costs at most this many symbols. */
export const DEFAULT_SLIP_BLOCK_SYMBOLS = 512;

/** Options as checked, with their defaults. */
export interface Validated extends SyncOptions {
  evmNormalization: EvmNormalization;
  bitMetric: BitMetric;
  symbolRate: number | undefined;
  slipCorrection: SlipCorrection;
  slipBlockSymbols: number;
}

export function validate(modulation: ModulationName, options: MeasureOptions): Validated {
  checkModulation(NAME, 'modulation', modulation);
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
  const slipCorrection = options.slipCorrection ?? 'per-block';
  if (slipCorrection !== 'per-block' && slipCorrection !== 'none')
    throw new OptionError(NAME, 'slipCorrection', "'per-block' or 'none'", slipCorrection);
  const slipBlockSymbols = options.slipBlockSymbols ?? DEFAULT_SLIP_BLOCK_SYMBOLS;
  if (!Number.isInteger(slipBlockSymbols) || slipBlockSymbols < 16)
    throw new OptionError(NAME, 'slipBlockSymbols', 'an integer ≥ 16', slipBlockSymbols);
  return {
    skipSymbols: options.skipSymbols,
    minCorrelation: options.minCorrelation,
    minPeakToFloor: options.minPeakToFloor,
    evmNormalization,
    bitMetric,
    symbolRate,
    slipCorrection,
    slipBlockSymbols,
  };
}

/** @param first index of a[0] in its stream, in symbols (for the message) */
export function requireFinite(a: ComplexArray, what: string, first: number): void {
  for (let i = 0; i < a.length; i++) {
    if (!Number.isFinite(a[i])) throw new RangeError(`${NAME}: ${what} symbol ${first + (i >> 1)} is not finite (${a[i]})`);
  }
}
