import { spawn } from 'node:child_process';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { main } from '../../src/index.js';

export interface CliRun {
  readonly code: number;
  readonly stdout: string;
  readonly stderr: string;
}

/** Runs the command in this process (on the sources), awaiting an asynchronous command. */
export async function runMain(argv: readonly string[]): Promise<CliRun> {
  let stdout = '';
  let stderr = '';
  const code = await main(
    argv,
    (s) => {
      stdout += s;
    },
    (s) => {
      stderr += s;
    },
  );
  return { code, stdout, stderr };
}

/** Runs a synchronous command (all but sweep) in this process, for tests that are not async. */
export function runMainSync(argv: readonly string[]): CliRun {
  let stdout = '';
  let stderr = '';
  const code = main(
    argv,
    (s) => {
      stdout += s;
    },
    (s) => {
      stderr += s;
    },
  );
  if (typeof code !== 'number') throw new Error(`runMainSync: '${argv[0]}' is asynchronous; use runMain`);
  return { code, stdout, stderr };
}

/** The repository root. */
export const ROOT = fileURLToPath(new URL('../../../../', import.meta.url));
/** The built command; the test command builds before the tests run. */
export const BUILT_CLI = fileURLToPath(new URL('../../dist/cli/main.js', import.meta.url));

/**
 * Runs the built command in a child process (worker threads need the built
 * JavaScript). `onStart` receives the child, to kill it part-way; `env`
 * adds (or, with undefined, removes) environment variables.
 */
export function runBuilt(
  argv: readonly string[],
  onStart?: (kill: () => void) => void,
  env: Readonly<Record<string, string | undefined>> = {},
): Promise<CliRun & { signal: string | null }> {
  if (!existsSync(BUILT_CLI)) throw new Error(`${BUILT_CLI} is missing: build first (npx -y pnpm@12.4.2 build)`);
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, [BUILT_CLI, ...argv], {
      stdio: ['ignore', 'pipe', 'pipe'],
      env: { ...process.env, ...env },
    });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => {
      stdout += d;
    });
    child.stderr.on('data', (d) => {
      stderr += d;
    });
    child.on('error', reject);
    child.on('close', (code, signal) => resolve({ code: code ?? -1, signal, stdout, stderr }));
    onStart?.(() => child.kill('SIGKILL'));
  });
}

/**
 * Runs the built command with a deadline: a run still going after `ms` is
 * killed and reported as hung (a FIFO or a device read without end would
 * otherwise stall the test run).
 */
export async function runBuiltWithin(
  argv: readonly string[],
  ms: number,
  env: Readonly<Record<string, string | undefined>> = {},
): Promise<CliRun & { hung: boolean }> {
  let hung = false;
  let timer: NodeJS.Timeout | undefined;
  const run = await runBuilt(
    argv,
    (kill) => {
      timer = setTimeout(() => {
        hung = true;
        kill();
      }, ms);
    },
    env,
  );
  clearTimeout(timer);
  return { ...run, hung };
}
