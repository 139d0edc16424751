/**
 * Intradyne metrics: synchronization with the transmitted reference, BER and
 * SER with exact confidence intervals, EVM, SNR, Q-factor, GMI/NGMI/MI, AWGN
 * theory curves and FEC thresholds. Pure computation: no Node-only API.
 *
 * A receiver calls {@link measure} once with its decided-on symbols and the
 * reference; the other exports are its parts, usable on their own.
 * @module @intradyne/metrics
 */

// Counting.
export * from './counting/clopper-pearson.js';
export * from './counting/compact-reference.js';
export * from './counting/error-count.js';
export * from './counting/reference-labels.js';
export * from './counting/reference-mismatch.js';
export * from './counting/reference-prior.js';
// Constellation density (the report's picture of the recovered symbols).
export * from './density/constellation-density.js';
// FEC thresholds.
export * from './fec/thresholds.js';
// Information.
export * from './information/air.js';
export * from './information/bit-metrics.js';
// The one call of a receiver.
export * from './measure/measure.js';
// Quality.
export * from './quality/evm.js';
export * from './quality/gain.js';
export * from './quality/snr.js';
export * from './receiver/analyze.js';
export * from './receiver/reference-acquisition.js';
// Synchronization with the reference.
export * from './sync/synchronize.js';
// Theory (AWGN).
export * from './theory/awgn-information.js';
export * from './theory/decision-regions.js';
export * from './theory/gauss-hermite.js';
export * from './theory/qam-ber.js';
