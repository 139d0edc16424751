import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach } from 'vitest';

const dirs: string[] = [];

/** A fresh temporary folder, removed after the test. */
export function tempDir(): string {
  const d = mkdtempSync(join(tmpdir(), 'intradyne-io-test-'));
  dirs.push(d);
  return d;
}

afterEach(() => {
  for (const d of dirs.splice(0)) rmSync(d, { recursive: true, force: true });
});

/** The repository's fixtures/captures folder. */
export const FIXTURES = new URL('../../../../fixtures/captures/', import.meta.url).pathname;

/** Runs a function expected to throw and returns the error (fails the test otherwise). */
export function caught(fn: () => unknown): Error {
  try {
    fn();
  } catch (e) {
    return e as Error;
  }
  throw new Error('expected an error, none was thrown');
}
