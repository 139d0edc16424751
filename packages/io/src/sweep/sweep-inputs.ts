import { statSync } from 'node:fs';
import { dirname, extname, join, relative, resolve, sep } from 'node:path';
import { DATA_EXTENSIONS, listCaptures } from '../capture/capture.js';
import { inputFailure } from '../errors/file-system.js';
import { InputError, quoteText } from '../errors/input-error.js';
import { readInputText } from '../load/open-file.js';

/** One capture of a sweep. */
export interface SweepCapture {
  /** The capture's path relative to the sweep root, with '/' separators: its key in the table and the journal. */
  readonly key: string;
  /** The path to open (the root as given, joined with the key). */
  readonly path: string;
}

/** What a sweep runs on. */
export interface SweepInputs {
  /** Whether a folder or a manifest was given. */
  readonly kind: 'folder' | 'manifest';
  /** The folder the keys are relative to: the folder swept, or the manifest's folder. */
  readonly root: string;
  /** In the sweep's stable order: sorted for a folder, as listed for a manifest. */
  readonly captures: readonly SweepCapture[];
}

const toKey = (p: string) => p.split(sep).join('/');

/**
 * The captures of a sweep: every capture of a folder and its subfolders
 * (see `listCaptures`), sorted by key, or the captures a manifest lists.
 *
 * A manifest is a UTF-8 text file with one capture per line (its data file or
 * its descriptor), relative to the manifest's folder (or absolute); blank
 * lines and lines whose first non-blank character is '#' are ignored, as is
 * surrounding white space. The captures keep the manifest's order.
 * @throws InputError when the input does not exist, a folder holds no
 *   capture, a manifest is empty or lists a capture twice (naming the line)
 * @example sweepInputs('best-two.txt').captures.map((c) => c.key)
 */
export function sweepInputs(input: string): SweepInputs {
  let isFolder: boolean;
  try {
    isFolder = statSync(input).isDirectory();
  } catch (e) {
    throw inputFailure(e, input, 'sweep input', 'a folder of captures or a manifest file');
  }
  if (isFolder) {
    const found = listCaptures(input);
    if (found.length === 0)
      throw new InputError(
        { file: input },
        'sweep input',
        'a folder with at least one capture (a data file and its .json)',
        'none',
      );
    const captures = found.map((p) => ({ key: toKey(relative(input, p)), path: p })).sort((a, b) => (a.key < b.key ? -1 : 1));
    return { kind: 'folder', root: input, captures };
  }
  return { kind: 'manifest', root: dirname(input), captures: readManifest(input) };
}

/**
 * Reads a manifest (format in {@link sweepInputs}).
 * @throws InputError naming the manifest and line of a capture listed twice
 *   or of a line that names no data file or descriptor, or an empty manifest
 * @example readManifest('best-two.txt') // the captures listed, in order
 */
export function readManifest(path: string): SweepCapture[] {
  const root = dirname(path);
  const lines = readInputText(path, 'manifest').split(/\r?\n/);
  const seen = new Map<string, number>();
  const captures: SweepCapture[] = [];
  for (const [i, raw] of lines.entries()) {
    const text = raw.trim();
    if (text === '' || text.startsWith('#')) continue;
    // A line names a capture's data file or its descriptor: anything else (a folder, a note) is a mistake of the line.
    const ext = extname(text).toLowerCase();
    if (!(ext in DATA_EXTENSIONS) && ext !== '.json')
      throw new InputError(
        { file: path, line: i + 1, column: raw.indexOf(text) + 1 },
        'capture',
        `the path of a data file (${Object.keys(DATA_EXTENSIONS).join(', ')}) or of its descriptor (.json)`,
        quoteText(text),
      );
    const full = resolve(root, text);
    const key = toKey(relative(resolve(root), full));
    const first = seen.get(key);
    if (first !== undefined) {
      throw new InputError(
        { file: path, line: i + 1, column: raw.indexOf(text) + 1 },
        'capture',
        'each capture listed once',
        `${JSON.stringify(text)}, already on line ${first}`,
      );
    }
    seen.set(key, i + 1);
    captures.push({ key, path: text.startsWith('/') ? text : join(root, text) });
  }
  if (captures.length === 0) throw new InputError({ file: path }, 'manifest', 'at least one capture path (one per line)', 'none');
  return captures;
}
