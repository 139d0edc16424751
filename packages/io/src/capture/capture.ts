import { type Dirent, existsSync, readdirSync, realpathSync, statSync } from 'node:fs';
import { basename, dirname, extname, join, resolve } from 'node:path';
import type { ChannelBlock, DualPol, ModulationName } from '@intradyne/core';
import type { CompactReference } from '@intradyne/metrics';
import { inputFailure } from '../errors/file-system.js';
import { InputError, type InputLocation } from '../errors/input-error.js';
import { readInputText } from '../load/open-file.js';
import { type CaptureDescriptor, parseDescriptor, validateDescriptor } from './descriptor.js';
import { CAPTURE_FORMATS, type CaptureFormat, extensionList, formatOfExtension, type ReadOptions } from './formats.js';
import { parseJsonWithPositions, plainJson } from './json-positions.js';
import { rateProblem } from './limits.js';

/**
 * The command-line option of each descriptor field that an option can
 * override: a bad value given there is blamed on the option, not on the file.
 */
export const OVERRIDE_OPTIONS: Readonly<Record<string, string>> = {
  sampleRate: '--sample-rate',
  symbolRate: '--symbol-rate',
  modulation: '--modulation',
  rollOff: '--roll-off',
  dispersionPsPerNm: '--dispersion',
};

/** Data file formats by extension (`.csv`; `.arrow`, IPC file, and `.arrows`, IPC stream), from {@link CAPTURE_FORMATS}. */
export const DATA_EXTENSIONS: Readonly<Record<string, string>> = Object.fromEntries(
  CAPTURE_FORMATS.flatMap((f) => f.extensions.map((e) => [e, f.name])),
);

/** A capture: its files, its validated descriptor, its reference, and readers of its samples. */
export interface CaptureDescription {
  /** The data file's name without extension. */
  readonly name: string;
  /** Path of the data file. */
  readonly dataPath: string;
  /** Its format's name ('csv', 'arrow'), from the extension. */
  readonly format: string;
  /** The sidecar, or undefined for an Arrow capture described by its schema metadata alone. */
  readonly descriptorPath: string | undefined;
  /** Descriptor fields after defaults and overrides; `sampleRate` always set. */
  readonly descriptor: CaptureDescriptor & {
    /** Sa/s, stated or inferred from the time column. */
    readonly sampleRate: number;
  };
  /** Scope sample rate, Sa/s. */
  readonly sampleRate: number;
  /** Symbol rate, Bd. */
  readonly symbolRate: number;
  /** sampleRate / symbolRate (need not be an integer). */
  readonly samplesPerSymbol: number;
  /** The transmitted modulation. */
  readonly modulation: ModulationName;
  /** Transmitter root-raised-cosine roll-off. */
  readonly rollOff: number;
  /** ps/nm; undefined when not stated (to be estimated). */
  readonly dispersionPsPerNm: number | undefined;
  /** Path of the reference symbols file, resolved against the descriptor's folder. */
  readonly referencePath: string;
  /**
   * The transmitted symbols (at least 32), checked to be of the modulation
   * and held as their labels: 2 bytes per symbol for both polarizations
   * (see {@link loadReferenceLabels}).
   */
  readonly reference: CompactReference;
  /** What was noticed while opening that does not stop an analysis (an Arrow stream without its end marker…). */
  readonly warnings: readonly string[];
  /**
   * Where a descriptor field's value came from: its place in the descriptor
   * (line and column when known) or the option that overrode it.
   */
  origin(field: string):
    | InputLocation
    | {
        /** The option that gave the value, e.g. '--symbol-rate'. */
        readonly option: string;
      };
  /**
   * Streams the capture in blocks (bounded memory); `blockSize` applies to CSV (Arrow yields one block per batch),
   * and so does `parseAhead`: parse on a thread of its own while the caller works on the blocks already read.
   */
  blocks(options?: { readonly blockSize?: number; readonly parseAhead?: boolean }): Generator<ChannelBlock, void, undefined>;
  /** The asynchronous form of `blocks`. */
  blocksAsync(options?: { readonly blockSize?: number }): AsyncGenerator<ChannelBlock, void, undefined>;
}

/**
 * The sidecar descriptor path of a data file: same folder, same name, `.json`.
 * @example descriptorPathFor('lab/run-07.csv') // 'lab/run-07.json'
 */
export function descriptorPathFor(dataPath: string): string {
  return join(dirname(dataPath), `${basename(dataPath, extname(dataPath))}.json`);
}

/**
 * The data file of a capture given by its data file or by its descriptor
 * (the same-named `.csv`, `.arrow` or `.arrows` beside it).
 * @throws InputError when the file does not exist, has no data extension, or
 *   the descriptor has no single data file beside it
 * @example resolveDataPath('lab/run-07.json') // 'lab/run-07.csv' (or .arrow, whichever exists)
 */
export function resolveDataPath(path: string): string {
  const ext = extname(path).toLowerCase();
  if (ext === '.json') {
    const base = join(dirname(path), basename(path, extname(path)));
    const found = Object.keys(DATA_EXTENSIONS)
      .map((e) => base + e)
      .filter((p) => existsSync(p));
    if (found.length !== 1) {
      throw new InputError(
        { file: path },
        'capture',
        `one data file of the same name beside the descriptor (${Object.keys(DATA_EXTENSIONS).join(', ')})`,
        found.length === 0 ? 'none' : found.join(', '),
      );
    }
    return found[0];
  }
  if (!(ext in DATA_EXTENSIONS)) {
    throw new InputError(
      { file: path },
      'capture',
      `a data file (${Object.keys(DATA_EXTENSIONS).join(', ')}) or its descriptor (.json)`,
      `a '${ext}' file`,
    );
  }
  try {
    statSync(path);
  } catch (e) {
    // Missing, a broken link, a loop of links, a path through a file: the system says which.
    throw inputFailure(e, path, 'capture', 'an existing file');
  }
  return path;
}

/**
 * Opens a capture: finds its descriptor (`<name>.json` beside the data
 * file), loads and validates it (an Arrow capture may also carry descriptor
 * fields in its schema metadata; the sidecar wins), applies `overrides`
 * (command-line options win over the descriptor), loads the reference
 * symbols (path relative to the descriptor; CSV or Arrow) and checks them
 * against the modulation. Without a stated sample rate, a CSV's time column
 * gives it (read from the first rows now, checked over the whole file while
 * streaming).
 * @param path the data file or its descriptor
 * @throws InputError naming the file, line, column and field of any problem:
 *   no descriptor, a bad field, a missing or malformed reference, a reference
 *   of another modulation, no sample rate
 * @example const c = openCapture('lab/run-07.csv', { modulation: '16qam' }); for (const block of c.blocks()) chain.process(block);
 */
export function openCapture(path: string, overrides: Readonly<Record<string, unknown>> = {}): CaptureDescription {
  const dataPath = resolveDataPath(path);
  const format = formatOfExtension(extname(dataPath)) as CaptureFormat;
  const sidecar = descriptorPathFor(dataPath);
  const hasSidecar = existsSync(sidecar);
  const fields = format.descriptorFields(dataPath);
  const descriptorFile = hasSidecar ? sidecar : dataPath;
  if (hasSidecar) {
    const text = readInputText(sidecar, 'descriptor');
    // Validate the sidecar alone first, so that its messages carry its lines and columns.
    const root = parseJsonWithPositions(text, sidecar);
    // A root that is not an object: parseDescriptor reports it.
    if (root.kind !== 'object') parseDescriptor(text, sidecar);
    if (root.kind === 'object')
      for (const [k, v] of root.members) fields.set(k, { value: plainJson(v), line: v.line, column: v.column });
  } else if (fields.size === 0) {
    throw new InputError(
      { file: dataPath },
      'descriptor',
      `a descriptor ${sidecar} beside the data file${format.name === 'arrow' ? ' (or descriptor fields in the schema metadata)' : ''}`,
      'none',
    );
  }
  for (const [k, v] of Object.entries(overrides))
    if (v !== undefined) fields.set(k, { value: v, option: OVERRIDE_OPTIONS[k] ?? `the override '${k}'` });
  const d = validateDescriptor(fields, descriptorFile);
  let sampleRate = d.sampleRate;
  if (sampleRate === undefined) {
    sampleRate = format.sampleRateOf(dataPath, d.columns);
    if (sampleRate === undefined) {
      throw new InputError(
        { file: descriptorFile },
        "field 'sampleRate'",
        'a positive number of Sa/s (the data has no time column)',
        'nothing (the field is missing)',
      );
    }
    const problem = rateProblem(sampleRate, d.symbolRate);
    if (problem !== null)
      throw new InputError({ file: dataPath }, 'time column', `a sample rate ${problem}`, `${sampleRate} Sa/s`);
  }
  const referencePath = resolve(dirname(descriptorFile), d.reference);
  const reference = loadReferenceLabels(referencePath, descriptorFile, d.modulation, d.reference);
  const samplesPerSymbol = sampleRate / d.symbolRate;
  const rate = sampleRate;
  const read = (o?: { blockSize?: number; parseAhead?: boolean }): ReadOptions => ({
    columns: d.columns,
    sampleRate: rate,
    samplesPerSymbol,
    blockSize: o?.blockSize,
    parseAhead: o?.parseAhead,
  });
  const warning = format.warning(dataPath);
  const warnings: string[] = warning === null ? [] : [warning];
  const origin = (field: string): InputLocation | { readonly option: string } => {
    const f = fields.get(field);
    if (f?.option !== undefined) return { option: f.option };
    return f?.line !== undefined ? { file: descriptorFile, line: f.line, column: f.column } : { file: descriptorFile };
  };
  return {
    name: basename(dataPath, extname(dataPath)),
    dataPath,
    format: format.name,
    descriptorPath: hasSidecar ? sidecar : undefined,
    descriptor: { ...d, sampleRate },
    sampleRate,
    symbolRate: d.symbolRate,
    samplesPerSymbol,
    modulation: d.modulation,
    rollOff: d.rollOff,
    dispersionPsPerNm: d.dispersionPsPerNm,
    referencePath,
    reference,
    warnings,
    origin,
    blocks: (o) => format.blocks(dataPath, read(o)),
    blocksAsync: (o) => format.blocksAsync(dataPath, read(o)),
  };
}

/**
 * Loads reference symbols by extension: `.csv` or `.arrow`/`.arrows`.
 * @throws InputError naming the descriptor when the file is missing or of another type
 * @example const ref = loadReference('tx-symbols.csv', 'lab/run-07.json'); // CSV or Arrow, checked
 */
export function loadReference(path: string, descriptorFile: string, written = path): DualPol {
  return referenceFormat(path, descriptorFile, written).reference(path);
}

/**
 * Loads reference symbols by extension as their labels, checked to be of the
 * modulation: a CSV file read in passes without holding its numbers
 * ({@link loadReferenceLabelsCsv}), an Arrow file read whole, checked
 * ({@link checkReferenceConstellation}) and labelled.
 * @throws InputError naming the descriptor when the file is missing or of another type, and
 *   the reference file for any problem of its content
 * @example const ref = loadReferenceLabels('tx-symbols.csv', 'lab/run-07.json', '16qam'); ref.symbols;
 */
export function loadReferenceLabels(
  path: string,
  descriptorFile: string,
  modulation: ModulationName,
  written = path,
): CompactReference {
  return referenceFormat(path, descriptorFile, written).referenceLabels(path, modulation);
}

/** The reference file's format, by its extension, checked with the file's existence. */
function referenceFormat(path: string, descriptorFile: string, written: string): CaptureFormat {
  // A broken symbolic link does not exist either.
  if (!existsSync(path)) {
    throw new InputError(
      { file: descriptorFile },
      "field 'reference'",
      'the path of an existing file (relative to the descriptor)',
      `${JSON.stringify(written)} (${path}: no such file)`,
    );
  }
  const format = formatOfExtension(extname(path));
  if (format !== undefined) return format;
  throw new InputError({ file: descriptorFile }, "field 'reference'", `a ${extensionList()} file`, JSON.stringify(written));
}

/**
 * The captures of a folder and its subfolders: every data file (`.csv`,
 * `.arrow`, `.arrows`) with a same-named `.json` beside it, and nothing else
 * (a reference file has no descriptor). Names starting with '.' are skipped
 * (temporary files of atomic writes, hidden folders). Symbolic links are
 * followed, to files and to folders (a folder reached twice, through a link
 * loop or two links, is walked once); a data file that is not a regular
 * file (a FIFO, a broken link) is listed all the same, so that the analysis
 * reports it instead of the sweep skipping it silently.
 * @returns data file paths, sorted
 * @throws InputError when a folder cannot be read (no permission…)
 * @example listCaptures('osnr-sweep') // ['osnr-sweep/a/run-01.csv', 'osnr-sweep/run-02.arrow', …]
 */
export function listCaptures(dir: string): string[] {
  const found: string[] = [];
  const walked = new Set<string>();
  const walk = (d: string) => {
    let real: string;
    let entries: Dirent[];
    try {
      real = realpathSync(d);
      if (walked.has(real)) return;
      walked.add(real);
      entries = readdirSync(d, { withFileTypes: true });
    } catch (e) {
      throw inputFailure(e, d, 'folder', 'a readable folder');
    }
    const folder = (p: string, isLink: boolean, isDir: boolean) => {
      if (!isLink) return isDir;
      try {
        return statSync(p).isDirectory();
      } catch {
        return false; // a broken link: a file name like any other
      }
    };
    const names = new Set(
      entries.filter((e) => !folder(join(d, e.name), e.isSymbolicLink(), e.isDirectory())).map((e) => e.name),
    );
    for (const e of entries) {
      if (e.name.startsWith('.')) continue;
      const p = join(d, e.name);
      if (folder(p, e.isSymbolicLink(), e.isDirectory())) walk(p);
      else if (formatOfExtension(extname(e.name)) !== undefined) {
        if (names.has(`${basename(e.name, extname(e.name))}.json`)) found.push(p);
      }
    }
  };
  walk(dir);
  return found.sort();
}
