/**
 * What the first bytes of a file say about its encoding, for the text
 * readers (CSV tables, descriptors, manifests, journals): a UTF-8
 * byte-order mark is accepted and skipped (spreadsheet programs write one);
 * UTF-16 and UTF-32 text, compressed archives and other binary formats are
 * named, so that the message says what the file is instead of quoting its
 * bytes.
 */

/** Length of the UTF-8 byte-order mark EF BB BF. */
export const UTF8_BOM_BYTES = 3;

/** Leading bytes of binary formats that end up under a text name, and what they are. */
const SIGNATURES: readonly (readonly [readonly number[], string])[] = [
  [[0x1f, 0x8b], 'gzip-compressed data (decompress it first)'],
  [[0x50, 0x4b, 0x03, 0x04], 'a ZIP archive (extract it first)'],
  [[0x28, 0xb5, 0x2f, 0xfd], 'zstd-compressed data (decompress it first)'],
  [[0x42, 0x5a, 0x68], 'bzip2-compressed data (decompress it first)'],
  [[0xfd, 0x37, 0x7a, 0x58, 0x5a, 0x00], 'xz-compressed data (decompress it first)'],
  [[0x41, 0x52, 0x52, 0x4f, 0x57, 0x31], 'an Arrow IPC file (name it .arrow)'],
  [[0xff, 0xff, 0xff, 0xff], 'an Arrow IPC stream (name it .arrows)'],
  [[0x50, 0x41, 0x52, 0x31], 'a Parquet file'],
  [[0x89, 0x48, 0x44, 0x46], 'an HDF5 file'],
  [[0x4d, 0x41, 0x54, 0x4c, 0x41, 0x42], 'a MATLAB MAT-file'],
];

const startsWith = (bytes: Uint8Array, sig: readonly number[]) =>
  bytes.length >= sig.length && sig.every((b, i) => bytes[i] === b);

/**
 * Checks the first bytes of a text file (as many as were read, up to a few
 * hundred are enough).
 * @returns the number of bytes to skip (3 for a UTF-8 byte-order mark, else
 *   0), or a description of what the file is when it is not UTF-8 text
 * @example textStart(new Uint8Array([0x1f, 0x8b, 8])) // { problem: 'gzip-compressed data (decompress it first)' }
 */
export function textStart(bytes: Uint8Array): { skip: number } | { problem: string } {
  if (startsWith(bytes, [0xef, 0xbb, 0xbf])) return { skip: UTF8_BOM_BYTES };
  if (startsWith(bytes, [0xff, 0xfe, 0x00, 0x00]) || startsWith(bytes, [0x00, 0x00, 0xfe, 0xff]))
    return { problem: 'UTF-32 text (save it as UTF-8)' };
  if (startsWith(bytes, [0xff, 0xfe])) return { problem: 'UTF-16 text, little-endian (save it as UTF-8)' };
  if (startsWith(bytes, [0xfe, 0xff])) return { problem: 'UTF-16 text, big-endian (save it as UTF-8)' };
  for (const [sig, what] of SIGNATURES) if (startsWith(bytes, sig)) return { problem: what };
  // UTF-16 without a byte-order mark: ASCII text with a zero byte beside every character.
  const head = bytes.subarray(0, 256 - (Math.min(bytes.length, 256) % 2));
  let zeros = 0;
  let oddZeros = 0;
  let evenZeros = 0;
  for (let i = 0; i < head.length; i++) {
    if (head[i] !== 0) continue;
    zeros++;
    if (i % 2) oddZeros++;
    else evenZeros++;
  }
  if (zeros > 0) {
    const half = head.length / 2;
    const utf16 = head.length >= 4 && (oddZeros === half || evenZeros === half) && zeros === half;
    return { problem: utf16 ? 'UTF-16 text without a byte-order mark (save it as UTF-8)' : 'binary data (zero bytes)' };
  }
  return { skip: 0 };
}
