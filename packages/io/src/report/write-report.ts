import { resolve } from 'node:path';
import { InputError } from '../errors/input-error.js';
import { writeFileAtomic } from '../write/atomic.js';

/**
 * Writes a report atomically, replacing an earlier report at `path` but
 * never one of the inputs it was made from.
 * @param inputs the files the report describes (data, descriptor, reference…)
 * @throws InputError when `path` is one of `inputs`
 * @example writeReport('run-07.html', analysisReport(analysis), ['run-07.csv', 'run-07.json']);
 */
export function writeReport(path: string, html: string, inputs: readonly string[] = []): void {
  const target = resolve(path);
  for (const input of inputs) {
    if (resolve(input) === target)
      throw new InputError({ file: path }, 'report file', 'a path that is not an input', 'the path of an input file');
  }
  writeFileAtomic(path, (append) => append(html), { overwrite: true });
}
