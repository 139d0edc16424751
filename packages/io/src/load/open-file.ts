import { openSync } from 'node:fs';
import { type FileHandle, open } from 'node:fs/promises';
import { InputError } from '../errors/input-error.js';

/** The InputError for a file that cannot be opened, with the system's reason (ENOENT, EISDIR, EACCES…). */
function unreadable(path: string, e: unknown): InputError {
  return new InputError({ file: path }, 'file', 'a readable file', (e as NodeJS.ErrnoException).code ?? String(e));
}

/**
 * Opens a file for reading and returns its descriptor.
 * @throws InputError when it cannot be opened (missing, a folder, no permission)
 */
export function openForReading(path: string): number {
  try {
    return openSync(path, 'r');
  } catch (e) {
    throw unreadable(path, e);
  }
}

/** The asynchronous form of {@link openForReading}: a file handle. */
export async function openForReadingAsync(path: string): Promise<FileHandle> {
  try {
    return await open(path, 'r');
  } catch (e) {
    throw unreadable(path, e);
  }
}
