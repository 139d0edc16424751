/**
 * Test support shared by every package: the block-size property check.
 * @packageDocumentation
 */
export { type BlockInvarianceOptions, type BlockInvarianceResult, checkBlockInvariance } from './block-invariance.js';
