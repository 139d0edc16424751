/** Bad usage or bad input: the command exits with code 2. */
export class UsageError extends Error {
  override readonly name = 'UsageError';
}

/** Exit codes of the intradyne command. */
export const EXIT = { done: 0, analysisFailed: 1, badInput: 2 } as const;
