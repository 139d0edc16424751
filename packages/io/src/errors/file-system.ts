import type { Stats } from 'node:fs';
import { InputError } from './input-error.js';
import { OutputError } from './output-error.js';

/**
 * The file-system conditions a user meets, in words, by Node's error code.
 * Every failed system call on a user's path goes through {@link inputFailure}
 * or {@link outputFailure}, which quote these, so that a message says what
 * happened to which path, never a stack trace.
 */
const REASONS: Readonly<Record<string, string>> = {
  ENOENT: 'no such file or folder',
  ENOTDIR: 'a path through something that is not a folder',
  EISDIR: 'a folder',
  ERR_FS_EISDIR: 'a folder',
  EEXIST: 'an existing file',
  ENOTEMPTY: 'a folder that is not empty',
  ENOSPC: 'no space left on the device',
  EDQUOT: 'the disk quota exhausted',
  EFBIG: 'a file larger than the file system allows',
  EROFS: 'a read-only file system',
  EACCES: 'permission denied',
  EPERM: 'an operation not permitted',
  ELOOP: 'a loop of symbolic links',
  ENAMETOOLONG: 'a name too long for the file system',
  EMFILE: 'too many open files in this process',
  ENFILE: 'too many open files on the system',
  EIO: 'an input/output error of the device',
  EBUSY: 'a busy file or device',
  ETXTBSY: 'a running program',
  ENXIO: 'a device that is not there',
  ENODEV: 'a file system that does not support it',
  EXDEV: 'a move across file systems',
  EAGAIN: 'a file that is not ready (a pipe or a device)',
  ESTALE: 'a stale network file handle',
};

/** A failed system call: an Error with a string `code` such as 'ENOENT'. */
export function isSystemError(e: unknown): e is NodeJS.ErrnoException & { code: string } {
  return e instanceof Error && typeof (e as NodeJS.ErrnoException).code === 'string';
}

/**
 * The system's reason in words, with its code: `ENOSPC (no space left on the device)`.
 * @example systemReason(Object.assign(new Error('x'), { code: 'EISDIR' })) // 'EISDIR (a folder)'
 */
export function systemReason(e: NodeJS.ErrnoException & { code: string }): string {
  const words = REASONS[e.code];
  return words ? `${e.code} (${words})` : e.code;
}

/**
 * What a path is, in words, from its stat: 'a regular file', 'a folder', 'a FIFO (named pipe)'…
 * @example kindOf(statSync('/tmp')) // 'a folder'
 */
export function kindOf(stats: Stats): string {
  if (stats.isFile()) return 'a regular file';
  if (stats.isDirectory()) return 'a folder';
  if (stats.isFIFO()) return 'a FIFO (named pipe)';
  if (stats.isCharacterDevice()) return 'a character device';
  if (stats.isBlockDevice()) return 'a block device';
  if (stats.isSocket()) return 'a socket';
  if (stats.isSymbolicLink()) return 'a symbolic link';
  return 'an unknown kind of file';
}

/**
 * The typed error for a failed system call while reading an input: an
 * InputError naming the path, what it was read as, what was expected and
 * the system's reason. A typed error passes through unchanged; anything
 * that is not a failed system call (a bug) is returned as it is.
 * @example try { readFileSync(path); } catch (e) { throw inputFailure(e, path, 'descriptor', 'a readable file'); }
 */
export function inputFailure(e: unknown, path: string, what: string, expected: string): Error {
  if (e instanceof InputError || e instanceof OutputError) return e;
  if (!isSystemError(e)) return e as Error;
  return new InputError({ file: path }, what, expected, systemReason(e));
}

/**
 * The typed error for a failed system call while writing an output: an
 * OutputError naming the path, what was being written, what was expected
 * and the system's reason (a full disk, a read-only folder, a folder in the
 * way). A typed error passes through unchanged; anything else is returned
 * as it is.
 * @example try { mkdirSync(dir, { recursive: true }); } catch (e) { throw outputFailure(e, dir, 'output folder', 'a folder that can be created'); }
 */
export function outputFailure(e: unknown, path: string, what: string, expected: string): Error {
  if (e instanceof InputError || e instanceof OutputError) return e;
  if (!isSystemError(e)) return e as Error;
  return new OutputError(path, what, expected, systemReason(e));
}
