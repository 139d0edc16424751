#!/usr/bin/env node
import { realpathSync } from 'node:fs';
import { LIBRARY_VERSION, OptionError } from '@intradyne/core';
import { isSystemError, systemReason } from '../errors/file-system.js';
import { InputError, printable } from '../errors/input-error.js';
import { OutputError } from '../errors/output-error.js';
import { ANALYZE_HELP, analyzeCommand } from './analyze.js';
import { DEMO_HELP, demoCommand } from './demo.js';
import { EXIT, UsageError } from './errors.js';
import { INSPECT_HELP, inspectCommand } from './inspect.js';
import { MERGE_HELP, mergeCommand } from './merge.js';
import { SIMULATE_HELP, simulateCommand } from './simulate.js';
import { defaultErr, SWEEP_HELP, sweepCommand } from './sweep.js';

type Command = (argv: readonly string[], out: (s: string) => void, err: (s: string) => void) => number | Promise<number>;

const COMMANDS: Record<string, { run: Command; summary: string; help: string }> = {
  analyze: { run: analyzeCommand, summary: 'run the default receiver on a capture and measure it', help: ANALYZE_HELP },
  sweep: {
    run: sweepCommand,
    summary: 'analyse every capture of a folder or manifest in parallel into one results table',
    help: SWEEP_HELP,
  },
  merge: {
    run: mergeCommand,
    summary: "combine the shards of a sweep ('sweep --shard K/N') into its one results table",
    help: MERGE_HELP,
  },
  simulate: { run: simulateCommand, summary: 'write simulated captures with descriptors and references', help: SIMULATE_HELP },
  inspect: {
    run: inspectCommand,
    summary: 'channel statistics, clipping, a power-spectrum summary and the symbol rate of a capture',
    help: INSPECT_HELP,
  },
  demo: { run: demoCommand, summary: 'simulate the built-in demo sweep, analyse it and print the results', help: DEMO_HELP },
};

export const MAIN_HELP = `intradyne ${LIBRARY_VERSION}: offline DSP for dual-polarization coherent receiver captures

Usage: intradyne COMMAND [options]

Commands:
${Object.entries(COMMANDS)
  .map(([name, c]) => `  ${name.padEnd(10)} ${c.summary}`)
  .join('\n')}

'intradyne COMMAND --help' describes a command.
Exit codes: 0 done, 1 the analysis failed, 2 bad usage or bad input.
`;

/**
 * Runs the command line; returns the exit code, or a promise of it for a
 * command that works asynchronously (sweep).
 * @example process.exitCode = await main(['analyze', 'lab/run-07.csv', '--json']);
 */
export function main(
  argv: readonly string[],
  out = (s: string) => void process.stdout.write(s),
  err = defaultErr,
): number | Promise<number> {
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    out(MAIN_HELP);
    return name === undefined ? EXIT.badInput : EXIT.done;
  }
  if (name === '--version') {
    out(`${LIBRARY_VERSION}\n`);
    return EXIT.done;
  }
  const command = COMMANDS[name];
  if (!command) {
    err(`intradyne: unknown command '${name}'; expected one of ${Object.keys(COMMANDS).join(', ')}\n`);
    return EXIT.badInput;
  }
  const badInput = (e: unknown): number => {
    if (e instanceof UsageError || e instanceof InputError || e instanceof OptionError || e instanceof OutputError) {
      err(`${printable(e.message)}\n`);
      return EXIT.badInput;
    }
    // A failed system call that no reader or writer turned into a typed error: still a message naming the path.
    if (isSystemError(e)) {
      const path = (e as NodeJS.ErrnoException).path;
      err(`${printable(path ?? 'intradyne')}: ${e.syscall ?? 'file system'}: ${systemReason(e)}\n`);
      return EXIT.badInput;
    }
    throw e;
  };
  try {
    const code = command.run(rest, out, err);
    return typeof code === 'number' ? code : code.catch(badInput);
  } catch (e) {
    return badInput(e);
  }
}

// Run when executed directly (as the bin or with node), not when imported.
// An installed bin is a symlink (node_modules/.bin/intradyne): compare its target.
const invoked = process.argv[1] ? new URL(`file://${realPath(process.argv[1])}`).pathname : '';
if (invoked && import.meta.url.endsWith(invoked.replace(/^.*\/dist\//, '/dist/'))) {
  // A reader that stops early (\`intradyne … | head\`) closes the pipe: nothing more to say, and no stack trace.
  for (const stream of [process.stdout, process.stderr])
    stream.on('error', (e: NodeJS.ErrnoException) => {
      if (e.code === 'EPIPE') process.exit(process.exitCode ?? 0);
      throw e;
    });
  const code = main(process.argv.slice(2));
  if (typeof code === 'number') process.exitCode = code;
  else
    void code.then((c) => {
      process.exitCode = c;
    });
}

function realPath(path: string): string {
  try {
    return realpathSync(path);
  } catch {
    return path;
  }
}
