import { statSync } from 'node:fs';
import { resolve } from 'node:path';
import { InputError } from '../errors/input-error.js';
import { checkOutputFile, type StagedFile, stageFile } from '../write/atomic.js';

/** The file a path names, as device and inode (a link or another spelling of it gives the same); null when it does not exist. */
function identity(path: string): string | null {
  try {
    const s = statSync(path);
    return `${s.dev}:${s.ino}`;
  } catch {
    return null;
  }
}

/**
 * Checks, before any work, that a report can be written at `path`: not one
 * of `inputs` (by path, or as the same file through a link), and a path
 * where a file can go (see `checkOutputFile`).
 * @throws InputError when `path` is an input; OutputError when it cannot be written
 * @example checkReportPath('run-07.html', ['run-07.csv', 'run-07.json']);
 */
export function checkReportPath(path: string, inputs: readonly string[] = []): void {
  const target = resolve(path);
  const same = identity(path);
  for (const input of inputs) {
    if (resolve(input) === target || (same !== null && identity(input) === same))
      throw new InputError({ file: path }, 'report file', 'a path that is not an input', 'the path of an input file');
  }
  checkOutputFile(path, 'report', { overwrite: true });
}

/**
 * The report written completely under a temporary name, staged (see
 * `stageFile`) for the caller to commit with its other outputs.
 * @throws as {@link checkReportPath}, or OutputError when it cannot be written
 * @example stageReport('run-07.html', html, ['run-07.csv']).commit();
 */
export function stageReport(path: string, html: string, inputs: readonly string[] = []): StagedFile {
  checkReportPath(path, inputs);
  return stageFile(path, (append) => append(html), { overwrite: true }, 'report');
}

/**
 * Writes a report atomically, replacing an earlier report at `path` but
 * never one of the inputs it was made from.
 * @param inputs the files the report describes (data, descriptor, reference…)
 * @throws InputError when `path` is one of `inputs`; OutputError when it cannot be written
 * @example writeReport('run-07.html', analysisReport(analysis), ['run-07.csv', 'run-07.json']);
 */
export function writeReport(path: string, html: string, inputs: readonly string[] = []): void {
  stageReport(path, html, inputs).commit();
}
