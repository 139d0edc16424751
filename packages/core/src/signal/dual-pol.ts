import type { ComplexArray } from './complex.js';

/** A pair of complex sample streams, one per polarization. */
export interface DualPol {
  /** x polarization, interleaved complex (2 numbers per sample). */
  readonly x: ComplexArray;
  /** y polarization, interleaved complex. */
  readonly y: ComplexArray;
}

/**
 * A dual-polarization complex signal with its timing.
 * `sampleRate` in Sa/s; `samplesPerSymbol` is 1 for a symbol-rate signal and
 * may be non-integer (2.5 for 80 GSa/s at 32 GBd).
 */
export interface DualPolSignal extends DualPol {
  /** Sa/s. */
  readonly sampleRate: number;
  /** Samples per symbol (1 for a symbol-rate signal). */
  readonly samplesPerSymbol: number;
}

/**
 * The four real channels a polarization-diverse coherent receiver records:
 * in-phase and quadrature of x and y, at the scope's `sampleRate` (Sa/s).
 * All four arrays have the same length.
 */
export interface ScopeChannels {
  /** In-phase channel of x, one value per sample. */
  readonly xi: Float64Array;
  /** Quadrature channel of x. */
  readonly xq: Float64Array;
  /** In-phase channel of y. */
  readonly yi: Float64Array;
  /** Quadrature channel of y. */
  readonly yq: Float64Array;
  /** Sa/s. */
  readonly sampleRate: number;
}

/** Names of the four receiver channels, in their conventional order. */
export const CHANNEL_NAMES = ['xi', 'xq', 'yi', 'yq'] as const;
/** One of the four receiver channels. */
export type ChannelName = (typeof CHANNEL_NAMES)[number];
