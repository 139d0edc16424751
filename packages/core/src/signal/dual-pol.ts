import type { ComplexArray } from './complex.js';

/** A pair of complex sample streams, one per polarization. */
export interface DualPol {
  readonly x: ComplexArray;
  readonly y: ComplexArray;
}

/**
 * A dual-polarization complex signal with its timing.
 * `sampleRate` in Sa/s; `samplesPerSymbol` is 1 for a symbol-rate signal and
 * may be non-integer (2.5 for 80 GSa/s at 32 GBd).
 */
export interface DualPolSignal extends DualPol {
  readonly sampleRate: number;
  readonly samplesPerSymbol: number;
}

/**
 * The four real channels a polarization-diverse coherent receiver records:
 * in-phase and quadrature of x and y, at the scope's `sampleRate` (Sa/s).
 * All four arrays have the same length.
 */
export interface ScopeChannels {
  readonly xi: Float64Array;
  readonly xq: Float64Array;
  readonly yi: Float64Array;
  readonly yq: Float64Array;
  readonly sampleRate: number;
}

/** Names of the four receiver channels, in their conventional order. */
export const CHANNEL_NAMES = ['xi', 'xq', 'yi', 'yq'] as const;
export type ChannelName = (typeof CHANNEL_NAMES)[number];
