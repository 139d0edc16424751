import { randomBytes } from 'node:crypto';
import {
  closeSync,
  existsSync,
  fstatSync,
  fsyncSync,
  linkSync,
  lstatSync,
  mkdirSync,
  openSync,
  renameSync,
  rmSync,
  type Stats,
  statSync,
  unlinkSync,
  writeSync,
} from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { isSystemError, kindOf, outputFailure } from '../errors/file-system.js';
import { OutputError, OutputExistsError } from '../errors/output-error.js';

export { OutputExistsError } from '../errors/output-error.js';

/** Options of {@link writeFileAtomic} and the writers built on it. */
export interface AtomicWriteOptions {
  /** Replace an existing file (default false: an existing file is an error). */
  readonly overwrite?: boolean;
}

/**
 * A file written completely under a temporary name in its target's folder,
 * flushed to disk and checked, waiting to be put in place: `commit` renames
 * it over the target, `discard` removes it. Staging several files before
 * committing any lets a caller write them all or none (a sweep's CSV and
 * Arrow tables).
 */
export interface StagedFile {
  /** The target path. */
  readonly path: string;
  /**
   * Puts the file in place (rename; without `overwrite`, a hard link that
   * fails when the target appeared meanwhile), then flushes the folder.
   * @throws OutputExistsError or OutputError; the temporary file is removed
   */
  commit(): void;
  /** Removes the temporary file (nothing happens to the target). */
  discard(): void;
}

/** What an output file must be, for messages. */
const WRITABLE = 'a path in an existing, writable folder with room for the file';

/** Hard links unsupported (some network and removable file systems): fall back to check-then-rename. */
const NO_HARD_LINKS = new Set(['EPERM', 'ENOTSUP', 'EOPNOTSUPP', 'ENOSYS', 'EXDEV', 'EMLINK']);

/**
 * Checks, before any work, that a file can be written at `path`: its
 * folder exists and is a folder, and the path itself is not a folder, a
 * FIFO or a device (and, without `overwrite`, not an existing file).
 * @param what what the file is, for messages ('report', 'output file'…)
 * @throws OutputError or OutputExistsError naming the path
 * @example checkOutputFile('reports/run-07.html', 'report', { overwrite: true });
 */
export function checkOutputFile(path: string, what = 'output file', options: AtomicWriteOptions = {}): void {
  const folder = dirname(path);
  let folderStats: Stats;
  try {
    folderStats = statSync(folder);
  } catch (e) {
    throw outputFailure(e, path, what, `a path in an existing folder (${folder})`);
  }
  if (!folderStats.isDirectory())
    throw new OutputError(path, what, `a path in a folder (${folder})`, `${folder} is ${kindOf(folderStats)}`);
  let stats: Stats | undefined;
  try {
    stats = lstatSync(path);
  } catch (e) {
    if (!(isSystemError(e) && e.code === 'ENOENT')) throw outputFailure(e, path, what, WRITABLE);
  }
  if (stats === undefined) return;
  // A link is replaced, not followed; anything else that is not a regular file is in the way.
  if (!stats.isFile() && !stats.isSymbolicLink()) throw new OutputError(path, what, 'a path for a file', kindOf(stats));
  if (!options.overwrite) throw new OutputExistsError(path);
}

/**
 * Checks, before any work, that `dir` is a folder or can be made one: it
 * exists as a folder, or does not exist (it is created later).
 * @throws OutputError when a file or something else stands in its place
 * @example checkOutputFolder('lab-results');
 */
export function checkOutputFolder(dir: string, what = 'output folder'): void {
  let stats: Stats;
  try {
    stats = statSync(dir);
  } catch (e) {
    if (isSystemError(e) && e.code === 'ENOENT') return;
    throw outputFailure(e, dir, what, 'a folder (created when missing)');
  }
  if (!stats.isDirectory()) throw new OutputError(dir, what, 'a folder (created when missing)', kindOf(stats));
}

/**
 * Creates an output folder (and its parents) unless it exists.
 * @throws OutputError naming the folder: a file in the way, a read-only
 *   file system, no permission, a full disk
 * @example prepareOutputFolder('lab-sweep');
 */
export function prepareOutputFolder(dir: string, what = 'output folder'): void {
  checkOutputFolder(dir, what);
  try {
    mkdirSync(dir, { recursive: true });
  } catch (e) {
    throw outputFailure(mkdirReason(dir, e), dir, what, 'a folder (created when missing)');
  }
  let stats: Stats;
  try {
    stats = statSync(dir);
  } catch (e) {
    throw outputFailure(e, dir, what, 'a folder (created when missing)');
  }
  if (!stats.isDirectory()) throw new OutputError(dir, what, 'a folder', kindOf(stats));
}

/**
 * The true reason a recursive mkdir failed: Node reports ENOENT for every
 * failure of its recursive form (a read-only file system, no permission),
 * so the first missing folder is made again alone, which fails with the
 * system's own reason.
 */
function mkdirReason(dir: string, e: unknown): unknown {
  if (!(isSystemError(e) && e.code === 'ENOENT')) return e;
  let missing = dir;
  while (dirname(missing) !== missing && !existsSync(dirname(missing))) missing = dirname(missing);
  try {
    mkdirSync(missing);
  } catch (plain) {
    return plain;
  }
  return e;
}

/**
 * Writes a file under a temporary name beside `path` (a hidden name that
 * folder listings skip), checking that every byte is written, flushing it
 * to disk and checking its size, and returns it staged (see
 * {@link StagedFile}). `write` receives a function that appends text or
 * bytes. On any failure the temporary file is removed and a typed error
 * thrown: nothing half-written is ever left, under any name.
 * @throws OutputExistsError when the target exists and `overwrite` is not
 *   set; OutputError for a path that cannot be written (a missing folder, a
 *   folder in the way, a full disk, a read-only file system…); whatever
 *   `write` throws
 * @example const csv = stageFile('results.csv', (append) => append('a,b\n')); csv.commit();
 */
export function stageFile(
  path: string,
  write: (append: (chunk: string | Uint8Array) => void) => void,
  options: AtomicWriteOptions = {},
  what = 'output file',
): StagedFile {
  checkOutputFile(path, what, options);
  const temp = join(dirname(path), `.${basename(path)}.${process.pid}.${randomBytes(4).toString('hex')}.tmp`);
  let fd: number;
  try {
    fd = openSync(temp, 'wx', 0o666);
  } catch (e) {
    throw outputFailure(e, path, what, WRITABLE);
  }
  let written = 0;
  let open = true;
  const remove = () => rmSync(temp, { force: true });
  try {
    write((chunk) => {
      const bytes = typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk;
      written += writeAll(fd, bytes, path, what, written);
    });
    fsyncSync(fd);
    const size = fstatSync(fd).size;
    if (size !== written) throw new OutputError(path, what, `a complete file of ${written} bytes`, `${size} bytes on disk`);
    open = false;
    closeSync(fd);
  } catch (e) {
    if (open) closeSync(fd);
    remove();
    throw outputFailure(e, path, what, WRITABLE);
  }
  let done = false;
  return {
    path,
    commit: () => {
      if (done) return;
      done = true;
      try {
        place(temp, path, options);
      } catch (e) {
        remove();
        throw outputFailure(e, path, what, WRITABLE);
      }
      flushFolder(dirname(path));
    },
    discard: () => {
      if (done) return;
      done = true;
      remove();
    },
  };
}

/**
 * Writes a file atomically: {@link stageFile}, then commit. A reader never
 * sees a half-written file, and an interrupted or failed write leaves
 * neither a partial output nor a temporary file.
 * @throws OutputExistsError when the target exists and `overwrite` is not set; OutputError as {@link stageFile}
 * @example writeFileAtomic('table.txt', (append) => { append('a,b\n'); append('1,2\n'); });
 */
export function writeFileAtomic(
  path: string,
  write: (append: (chunk: string | Uint8Array) => void) => void,
  options: AtomicWriteOptions = {},
  what = 'output file',
): void {
  stageFile(path, write, options, what).commit();
}

/**
 * Stages every file first, then commits them in order: when any of them
 * cannot be written completely (a full disk, say), none is put in place
 * and every temporary file is removed. (Only a failure between two renames,
 * after every byte is safely on disk, could leave the first in place
 * without the others.)
 * @throws as {@link stageFile}
 * @example commitTogether([() => stageFile('results.csv', writeCsv, { overwrite: true }), () => stageFile('results.arrow', writeArrow, { overwrite: true })]);
 */
export function commitTogether(stages: readonly (() => StagedFile)[]): void {
  const staged: StagedFile[] = [];
  try {
    for (const stage of stages) staged.push(stage());
  } catch (e) {
    for (const s of staged) s.discard();
    throw e;
  }
  for (const [i, s] of staged.entries()) {
    try {
      s.commit();
    } catch (e) {
      for (const rest of staged.slice(i + 1)) rest.discard();
      throw e;
    }
  }
}

/** Writes all of `bytes`, looping over short writes; returns the byte count. */
function writeAll(fd: number, bytes: Uint8Array, path: string, what: string, before: number): number {
  let at = 0;
  while (at < bytes.length) {
    const n = writeSync(fd, bytes, at, bytes.length - at);
    // A regular file accepts at least one byte or fails: no progress is a failure of its own.
    if (n <= 0) throw new OutputError(path, what, 'every byte written', `a write of 0 bytes after ${before + at} bytes`);
    at += n;
  }
  return at;
}

/** Moves the finished temporary file to its target. */
function place(temp: string, path: string, options: AtomicWriteOptions): void {
  if (options.overwrite) {
    renameSync(temp, path);
    return;
  }
  // A hard link fails when the target exists, even one created since the check: nothing is ever replaced.
  try {
    linkSync(temp, path);
  } catch (e) {
    if (isSystemError(e) && e.code === 'EEXIST') throw new OutputExistsError(path);
    if (!(isSystemError(e) && NO_HARD_LINKS.has(e.code))) throw e;
    if (existsSync(path)) throw new OutputExistsError(path);
    renameSync(temp, path);
    return;
  }
  unlinkSync(temp);
}

/** Flushes a folder's entries to disk (the rename); some file systems refuse, which costs only durability. */
function flushFolder(dir: string): void {
  let fd: number | undefined;
  try {
    fd = openSync(dir, 'r');
    fsyncSync(fd);
  } catch {
    // Not supported here: the rename still happened.
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}
