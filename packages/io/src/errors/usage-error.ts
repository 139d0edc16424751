/**
 * Bad usage: a command-line option or an override with a value the command
 * cannot take. The command exits with code 2 and prints the message, which
 * names the option, what was expected and what was received.
 * @example throw new UsageError("--sample-rate: expected a positive number of Sa/s, received '80 G'");
 */
export class UsageError extends Error {
  /** Always 'UsageError'. */
  override readonly name = 'UsageError';
}
