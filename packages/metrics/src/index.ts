/**
 * Intradyne metrics: synchronization with the transmitted reference, BER and
 * SER with exact confidence intervals, EVM, SNR, Q-factor, GMI/NGMI/MI, AWGN
 * theory curves and FEC thresholds. Pure computation: no Node-only API.
 * @packageDocumentation
 */

export * from './counting/clopper-pearson.js';
export * from './counting/error-count.js';
export * from './counting/reference-labels.js';
export * from './fec/thresholds.js';
export * from './information/air.js';
export * from './information/bit-metrics.js';
export * from './measure/measure.js';
export * from './quality/evm.js';
export * from './quality/gain.js';
export * from './quality/snr.js';
export * from './sync/synchronize.js';
export * from './theory/awgn-information.js';
export * from './theory/gauss-hermite.js';
export * from './theory/qam-ber.js';
