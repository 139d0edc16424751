import { createHash, type Hash } from 'node:crypto';
import { closeSync, existsSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { descriptorPathFor, resolveDataPath } from '../capture/capture.js';
import { openInput, readInput, readInputText } from '../load/open-file.js';

/** Bytes per read while hashing: large enough to amortize system calls, small enough to bound memory. */
const CHUNK_BYTES = 1 << 20;

function hashFile(hash: Hash, path: string): void {
  const fd = openInput(path);
  try {
    const buffer = new Uint8Array(CHUNK_BYTES);
    for (;;) {
      const n = readInput(fd, path, 'file', buffer, 0, CHUNK_BYTES, null);
      if (n === 0) break;
      hash.update(buffer.subarray(0, n));
    }
  } finally {
    closeSync(fd);
  }
}

/**
 * What identifies a capture's input before it is analysed: the SHA-256 (hex)
 * of its data file's bytes, then its descriptor's, then its reference's
 * (each preceded by its role and byte length so that moving bytes from one
 * file to another changes the hash). Reads the files in 1 MiB chunks, about
 * as fast as the disk; far cheaper than an analysis.
 * @param path the data file or the descriptor
 * @returns null when the files cannot be read (the analysis then reports why)
 * @example captureInputHash('lab/run-07.csv') // SHA-256 of data, descriptor and reference; null when unreadable
 */
export function captureInputHash(path: string): string | null {
  try {
    const dataPath = resolveDataPath(path);
    const hash = createHash('sha256');
    const part = (role: string, p: string) => {
      hash.update(`${role}\n`);
      hashFile(hash, p);
      hash.update('\n');
    };
    part('data', dataPath);
    const descriptor = descriptorPathFor(dataPath);
    if (existsSync(descriptor)) {
      part('descriptor', descriptor);
      const reference = referenceOf(descriptor);
      if (reference !== undefined && existsSync(reference)) part('reference', reference);
    }
    return hash.digest('hex');
  } catch {
    return null;
  }
}

/** The reference path a descriptor names, when it parses; undefined otherwise. */
function referenceOf(descriptor: string): string | undefined {
  try {
    const doc = JSON.parse(readInputText(descriptor, 'descriptor')) as { reference?: unknown };
    return typeof doc.reference === 'string' ? resolve(dirname(descriptor), doc.reference) : undefined;
  } catch {
    return undefined;
  }
}
