import { createHash } from 'node:crypto';
import { lstatSync, readdirSync, readFileSync } from 'node:fs';
import { join, relative } from 'node:path';
import { tableFromIPC } from 'apache-arrow';
import { expect } from 'vitest';

/** Every regular file under a folder with the SHA-256 of its bytes and its modification time (links and FIFOs by kind). */
export function snapshot(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (e.isFile())
        out[relative(dir, p)] = `${createHash('sha256').update(readFileSync(p)).digest('hex')} ${lstatSync(p).mtimeMs}`;
      else out[relative(dir, p)] = e.isSymbolicLink() ? 'link' : 'special';
    }
  };
  walk(dir);
  return out;
}

/** Temporary files of the atomic writer (`.NAME.PID.RANDOM.tmp`) anywhere under a folder. */
export function temporaryFiles(dir: string): string[] {
  const found: string[] = [];
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (/^\..*\.tmp$/.test(e.name) || /\.stale$/.test(e.name)) found.push(relative(dir, p));
    }
  };
  walk(dir);
  return found;
}

/** A stack trace's marks: a frame line, or Node's version line printed after an uncaught error. */
const STACK = /^\s+at .+\(?.*:\d+:\d+\)?$|^Node\.js v\d+/m;

/**
 * Checks that a command's stderr holds no stack trace and, for exit code 2,
 * a typed message: a line `PLACE: …expected …, received …` or a usage line.
 */
export function expectTypedOutcome(run: { code: number; stderr: string }, label = ''): void {
  expect(STACK.test(run.stderr), `${label}: a stack trace on stderr:\n${run.stderr}`).toBe(false);
  expect([0, 1, 2], `${label}: exit code ${run.code}; stderr:\n${run.stderr}`).toContain(run.code);
  if (run.code === 2) {
    const last = run.stderr.trimEnd().split('\n').pop() ?? '';
    expect(
      /expected .*(, received |$)|: already exists; refusing to overwrite it|^intradyne( \w+)?: |unknown command|Unknown option|Usage/.test(
        last,
      ),
      `${label}: exit 2 without a typed message: ${JSON.stringify(last)}`,
    ).toBe(true);
  }
}

/**
 * Checks every output a command may have left under a folder: no temporary
 * file, and each JSON, Arrow and results CSV complete (it parses; a results
 * CSV has one line per row of the Arrow table beside it).
 */
export function expectCompleteOutputs(dir: string, skip: (path: string) => boolean = () => false): void {
  expect(temporaryFiles(dir), `temporary files left under ${dir}`).toEqual([]);
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (skip(p)) continue;
      if (e.isDirectory()) walk(p);
      else if (!e.isFile()) continue;
      else if (e.name.endsWith('.analysis.json') || e.name === 'shard.json') JSON.parse(readFileSync(p, 'utf8'));
      else if (e.name.endsWith('.arrow') && (e.name === 'results.arrow' || e.name.endsWith('.symbols.arrow'))) {
        const t = tableFromIPC(readFileSync(p));
        if (e.name === 'results.arrow') {
          const csv = readFileSync(join(d, 'results.csv'), 'utf8').trimEnd().split('\n');
          expect(csv.length - 1, `${p}: rows of results.csv and results.arrow`).toBe(t.numRows);
        }
      } else if (e.name.endsWith('.html'))
        expect(readFileSync(p, 'utf8').trimEnd().endsWith('</html>'), `${p} complete`).toBe(true);
    }
  };
  walk(dir);
}
