/**
 * Intradyne core: the signal model, typed streaming pipelines, the receiver
 * stages, modulation, PRBS and a seeded simulator of a dual-polarization
 * coherent link. Pure computation: no file system, no Node-only API.
 * @packageDocumentation
 */

export * from './dispersion/blind-dispersion.js';
export * from './dispersion/compensate-dispersion.js';
export * from './dispersion/dispersion-filter.js';
export * from './dispersion/overlap-save.js';
export * from './dsp/fft.js';
export * from './dsp/kaiser.js';
export * from './dsp/rrc.js';
export * from './filter/fir.js';
export * from './frontend/combine-channels.js';
export * from './frontend/deskew-channels.js';
export * from './frontend/normalize-channels.js';
export * from './frontend/orthogonalize-iq.js';
export * from './modulation/constellation.js';
export * from './physics/jones.js';
export * from './physics/link.js';
export * from './pipeline/blocks.js';
export * from './pipeline/pipe.js';
export * from './pipeline/stage.js';
export * from './prbs/prbs.js';
export * from './random/rng.js';
export * from './resample/interpolation-kernel.js';
export * from './resample/matched-filter.js';
export * from './resample/resampler.js';
export * from './signal/complex.js';
export * from './signal/dual-pol.js';
export * from './sim/ideal-receiver.js';
export * from './sim/options.js';
export * from './sim/simulate.js';
export * from './timing/gardner-clock-recovery.js';
export * from './timing/square-timing.js';
export { LIBRARY_VERSION } from './version.js';
