export { UsageError } from '../errors/usage-error.js';

/** Exit codes of the intradyne command. */
export const EXIT = { done: 0, analysisFailed: 1, badInput: 2 } as const;
