/**
 * Intradyne core: the signal model, typed streaming pipelines, the receiver
 * stages, modulation, PRBS and a seeded simulator of a dual-polarization
 * coherent link. Pure computation: no file system, no Node-only API.
 * @packageDocumentation
 */

export * from './dsp/fft.js';
export * from './dsp/rrc.js';
export * from './equalizer/butterfly-kernel.js';
export * from './equalizer/cma.js';
export * from './equalizer/dd-lms.js';
export * from './equalizer/equalizer.js';
export * from './equalizer/rde.js';
export * from './equalizer/update-rule.js';
export * from './filter/fir.js';
export * from './frontend/combine-channels.js';
export * from './modulation/constellation.js';
export * from './physics/jones.js';
export * from './physics/link.js';
export * from './pipeline/blocks.js';
export * from './pipeline/pipe.js';
export * from './pipeline/stage.js';
export * from './prbs/prbs.js';
export * from './random/rng.js';
export * from './signal/complex.js';
export * from './signal/dual-pol.js';
export * from './sim/ideal-receiver.js';
export * from './sim/options.js';
export * from './sim/simulate.js';
export { LIBRARY_VERSION } from './version.js';
