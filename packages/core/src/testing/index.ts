/**
 * Test support shared by every package: the block-size property check.
 * @module @intradyne/core/testing
 */
export { type BlockInvarianceOptions, type BlockInvarianceResult, checkBlockInvariance } from './block-invariance.js';
