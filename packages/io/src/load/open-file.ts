import { closeSync, constants, fstatSync, lstatSync, openSync, readSync, realpathSync } from 'node:fs';
import { type FileHandle, open } from 'node:fs/promises';
import { inputFailure, kindOf } from '../errors/file-system.js';
import { InputError, withLinkTarget } from '../errors/input-error.js';
import { textStart } from './encoding.js';

/**
 * Opening without blocking: a FIFO (named pipe) opened for reading waits for
 * a writer, forever if none comes; with O_NONBLOCK the open returns at once
 * and the check of the file's kind that follows refuses it. On a regular
 * file the flag changes nothing.
 */
const READ_NOW = constants.O_RDONLY | constants.O_NONBLOCK;

/**
 * The file a path points to when the path is a symbolic link (its real
 * path), or undefined. Messages about the file's content name it, so that
 * quoted lines are never taken for the link's own.
 * @example linkTarget('lab/reference.csv') // '/data/patterns/prbs15.csv' when it is a link
 */
export function linkTarget(path: string): string | undefined {
  try {
    return lstatSync(path).isSymbolicLink() ? realpathSync(path) : undefined;
  } catch {
    return undefined;
  }
}

/**
 * Opens an input file for reading and returns its descriptor. The one way
 * this package opens a user's file: it never blocks (it opens with O_NONBLOCK)
 * and refuses anything but a regular file, so that a folder, a FIFO or a
 * device in place of a file is a typed error naming it, not a hang or a
 * stack trace.
 * @param what what the file is read as, for messages ('capture', 'reference', 'descriptor'…)
 * @throws InputError naming the path and the system's reason (missing, a
 *   folder, a FIFO, no permission…)
 * @example const fd = openInput('lab/run-07.csv', 'capture');
 */
export function openInput(path: string, what = 'file'): number {
  let fd: number;
  try {
    fd = openSync(path, READ_NOW);
  } catch (e) {
    throw withLinkTarget(inputFailure(e, path, what, 'a readable file'), path, linkTarget(path));
  }
  try {
    const stats = fstatSync(fd);
    if (!stats.isFile())
      throw new InputError({ file: path, linkTarget: linkTarget(path) }, what, 'a regular file', kindOf(stats));
  } catch (e) {
    closeSync(fd);
    throw inputFailure(e, path, what, 'a readable file');
  }
  return fd;
}

/** The asynchronous form of {@link openInput}: a file handle. */
export async function openInputAsync(path: string, what = 'file'): Promise<FileHandle> {
  let handle: FileHandle;
  try {
    handle = await open(path, READ_NOW);
  } catch (e) {
    throw withLinkTarget(inputFailure(e, path, what, 'a readable file'), path, linkTarget(path));
  }
  try {
    const stats = await handle.stat();
    if (!stats.isFile())
      throw new InputError({ file: path, linkTarget: linkTarget(path) }, what, 'a regular file', kindOf(stats));
  } catch (e) {
    await handle.close();
    throw inputFailure(e, path, what, 'a readable file');
  }
  return handle;
}

/**
 * Reads a system call's worth of bytes, turning a failure (EIO on a dying
 * disk, EISDIR…) into an InputError naming the file.
 */
export function readInput(
  fd: number,
  path: string,
  what: string,
  buffer: Uint8Array,
  offset: number,
  length: number,
  position: number | null,
): number {
  try {
    return readSync(fd, buffer, offset, length, position);
  } catch (e) {
    throw inputFailure(e, path, what, 'a readable file');
  }
}

/** Largest text file read whole (descriptors, manifests, pipeline and scenario files, shard records, journals): 1 GiB. */
export const MAX_TEXT_BYTES = 1 << 30;

const utf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * Reads a whole input file's bytes: a regular file only (see
 * {@link openInput}), at most 1 GiB.
 * @param what what the file is read as, for messages
 * @throws InputError naming the file: unreadable, not a regular file, or too large
 * @example const bytes = readInputBytes('lab-sweep/journal.jsonl', 'sweep journal');
 */
export function readInputBytes(path: string, what = 'file'): Uint8Array {
  const fd = openInput(path, what);
  try {
    const size = fstatSync(fd).size;
    if (size > MAX_TEXT_BYTES)
      throw new InputError({ file: path }, what, `a file of at most ${MAX_TEXT_BYTES} bytes`, `${size} bytes`);
    const bytes = new Uint8Array(size);
    let at = 0;
    // The size can change while reading (a file being written): read until the end, within the bound.
    while (at < bytes.length) {
      const n = readInput(fd, path, what, bytes, at, bytes.length - at, null);
      if (n === 0) break;
      at += n;
    }
    return bytes.subarray(0, at);
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  } finally {
    closeSync(fd);
  }
}

/**
 * Reads a whole UTF-8 text file: a regular file only (see {@link openInput}),
 * a UTF-8 byte-order mark skipped, and any other encoding or binary content
 * named in the error instead of decoded.
 * @param what what the file is read as, for messages
 * @throws InputError naming the file: unreadable, not a regular file, larger
 *   than 1 GiB, or not UTF-8 text
 * @example const text = readInputText('lab/run-07.json', 'descriptor');
 */
export function readInputText(path: string, what = 'file'): string {
  const bytes = readInputBytes(path, what);
  try {
    return decodeText(bytes, path, what);
  } catch (e) {
    throw withLinkTarget(e, path, linkTarget(path));
  }
}

/**
 * Decodes the bytes of a text file as UTF-8 (a byte-order mark skipped).
 * @throws InputError naming the file (and the line of the first byte that is
 *   not UTF-8) and what its bytes are instead
 */
export function decodeText(bytes: Uint8Array, path: string, what: string): string {
  const start = textStart(bytes);
  if ('problem' in start) throw new InputError({ file: path }, `${what} encoding`, 'UTF-8 text', start.problem);
  try {
    return utf8.decode(bytes.subarray(start.skip));
  } catch {
    const bad = firstNonUtf8(bytes, start.skip);
    let line = 1;
    for (let i = 0; i < bad; i++) if (bytes[i] === 10) line++;
    throw new InputError(
      { file: path, line },
      `${what} encoding`,
      'UTF-8 text',
      `a byte that is not UTF-8 (0x${bytes[bad].toString(16).padStart(2, '0')})`,
    );
  }
}

/** Index of the first byte that breaks UTF-8 (RFC 3629: lead byte, then its continuation bytes 10xxxxxx). */
function firstNonUtf8(bytes: Uint8Array, from: number): number {
  let i = from;
  while (i < bytes.length) {
    const b = bytes[i];
    const follow = b < 0x80 ? 0 : b >= 0xc2 && b <= 0xdf ? 1 : b >= 0xe0 && b <= 0xef ? 2 : b >= 0xf0 && b <= 0xf4 ? 3 : -1;
    if (follow < 0) return i;
    for (let k = 1; k <= follow; k++) if (i + k >= bytes.length || (bytes[i + k] & 0xc0) !== 0x80) return i;
    i += follow + 1;
  }
  return Math.min(i, bytes.length - 1);
}
