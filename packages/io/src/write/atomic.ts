import { randomBytes } from 'node:crypto';
import { closeSync, existsSync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';

/**
 * Thrown when an output would replace a file that must be kept.
 * @example try { writeJsonAtomic('out.json', {}); } catch (e) { if (e instanceof OutputExistsError) console.error(e.path); }
 */
export class OutputExistsError extends Error {
  /** Always 'OutputExistsError'. */
  override readonly name = 'OutputExistsError';
  constructor(
    /** The file that exists. */
    readonly path: string,
  ) {
    super(`${path}: already exists; refusing to overwrite it (choose another output folder or remove the file)`);
  }
}

/** Options of {@link writeFileAtomic} and the writers built on it. */
export interface AtomicWriteOptions {
  /** Replace an existing file (default false: an existing file is an error). */
  readonly overwrite?: boolean;
}

/**
 * Writes a file atomically: the content goes to a temporary file beside the
 * target, is flushed to disk, then renamed over the target, so that a reader
 * never sees a half-written file and an interrupted run leaves no partial
 * output. `write` receives a function that appends text or bytes.
 * @throws OutputExistsError when the target exists and `overwrite` is not set
 * @example writeFileAtomic('table.txt', (append) => { append('a,b\n'); append('1,2\n'); });
 */
export function writeFileAtomic(
  path: string,
  write: (append: (chunk: string | Uint8Array) => void) => void,
  options: AtomicWriteOptions = {},
): void {
  if (!options.overwrite && existsSync(path)) throw new OutputExistsError(path);
  const temp = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
  const fd = openSync(temp, 'wx');
  try {
    write((chunk) => {
      if (typeof chunk === 'string') writeSync(fd, chunk);
      else writeSync(fd, chunk, 0, chunk.length);
    });
    fsyncSync(fd);
    closeSync(fd);
  } catch (e) {
    closeSync(fd);
    rmSync(temp, { force: true });
    throw e;
  }
  renameSync(temp, path);
}
