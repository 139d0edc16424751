import { parseArgs } from 'node:util';
import { UsageError } from './errors.js';

export type OptionSpec = Record<string, { type: 'string' | 'boolean'; short?: string }>;

/**
 * Parses a command's arguments strictly: an unknown option or a missing value
 * is a UsageError naming the command.
 */
export function parseCommandArgs(
  command: string,
  argv: readonly string[],
  options: OptionSpec,
): { values: Record<string, string | boolean | undefined>; positionals: string[] } {
  try {
    return parseArgs({
      args: [...argv],
      options: { help: { type: 'boolean', short: 'h' }, ...options },
      allowPositionals: true,
      strict: true,
    });
  } catch (e) {
    throw new UsageError(`intradyne ${command}: ${(e as Error).message} (see 'intradyne ${command} --help')`);
  }
}

/**
 * A positive number from an option value.
 * @throws UsageError naming the option and the value received
 */
export function positiveNumber(command: string, option: string, text: string | undefined): number | undefined {
  if (text === undefined) return undefined;
  const v = Number(text);
  if (!Number.isFinite(v) || v <= 0)
    throw new UsageError(`intradyne ${command}: --${option} expected a positive number, received '${text}'`);
  return v;
}

/** A positive integer from an option value. */
export function positiveInteger(command: string, option: string, text: string | undefined): number | undefined {
  const v = positiveNumber(command, option, text);
  if (v !== undefined && !Number.isInteger(v)) {
    throw new UsageError(`intradyne ${command}: --${option} expected a positive integer, received '${text}'`);
  }
  return v;
}
