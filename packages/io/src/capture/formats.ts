import { type ChannelBlock, constellation, type DualPol, type ModulationName } from '@intradyne/core';
import type { CompactReference } from '@intradyne/metrics';
import {
  arrowStreamComplete,
  loadReferenceArrow,
  readArrowCapture,
  readArrowCaptureAsync,
  readArrowMetadata,
} from '../arrow/arrow-capture.js';
import { readCsvCapture, readCsvCaptureAsync } from '../load/csv-capture.js';
import { readCaptureCsvAhead } from '../load/parse-ahead.js';
import { DESCRIPTOR_FIELDS, type FieldValue } from './descriptor.js';
import { checkReferenceConstellation, compactReferenceOf, loadReferenceCsv, loadReferenceLabelsCsv } from './reference.js';

/** How a capture's samples are read: the columns, and the rates the descriptor gives. */
export interface ReadOptions {
  /** The descriptor's column mapping (channel, or 't' for a time column, to the file's column name). */
  readonly columns?: Readonly<Record<string, string>>;
  /** Sa/s. */
  readonly sampleRate: number;
  /** Samples per symbol (need not be an integer). */
  readonly samplesPerSymbol: number;
  /** Samples per block, where the format has a choice (CSV; Arrow yields its record batches). */
  readonly blockSize?: number;
  /** Parse on a thread of its own while the caller works on the blocks already read, where the format parses (CSV). */
  readonly parseAhead?: boolean;
}

/**
 * A capture data format: everything the library reads from files of it.
 * `openCapture`, `listCaptures` and the reference loader choose one by the
 * file's extension; a new format is one more of these.
 */
export interface CaptureFormat {
  /** Its name, as `CaptureDescription.format` says it. */
  readonly name: string;
  /** The extensions of its files, lower case with the dot. */
  readonly extensions: readonly string[];
  /** Descriptor fields the data file carries itself (in Arrow's schema metadata), none for others. */
  descriptorFields(path: string): Map<string, FieldValue>;
  /** The sample rate the data show themselves (a time column), or undefined. */
  sampleRateOf(path: string, columns: Readonly<Record<string, string>> | undefined): number | undefined;
  /** What to warn about a file that reads but looks cut short, or null. */
  warning(path: string): string | null;
  /** Streams the four channels in blocks, in bounded memory. */
  blocks(path: string, options: ReadOptions): Generator<ChannelBlock, void, undefined>;
  /** The same, asynchronously. */
  blocksAsync(path: string, options: ReadOptions): AsyncGenerator<ChannelBlock, void, undefined>;
  /** A reference file of this format as the symbols written. */
  reference(path: string): DualPol;
  /** A reference file of this format as its labels, checked against the modulation. */
  referenceLabels(path: string, modulation: ModulationName): CompactReference;
}

/** The channel columns alone (an Arrow file has no time column). */
const channelColumns = (columns: Readonly<Record<string, string>> | undefined) =>
  columns ? Object.fromEntries(Object.entries(columns).filter(([k]) => k !== 't')) : undefined;

/** CSV: a header row naming the columns, optional `#` comments and time column (see docs/capture-formats.md). */
const CSV: CaptureFormat = {
  name: 'csv',
  extensions: ['.csv'],
  descriptorFields: () => new Map(),
  sampleRateOf(path, columns) {
    const first = readCsvCapture(path, { columns, blockSize: 1001 }).next();
    return first.done ? undefined : first.value.sampleRate;
  },
  warning: () => null,
  blocks: (path, o) => (o.parseAhead ? readCaptureCsvAhead(path, o) : readCsvCapture(path, o)),
  blocksAsync: (path, o) => readCsvCaptureAsync(path, o),
  reference: (path) => loadReferenceCsv(path),
  referenceLabels: (path, modulation) => loadReferenceLabelsCsv(path, modulation),
};

/** Arrow IPC, file (`.arrow`) or stream (`.arrows`): float columns, descriptor fields in the schema metadata. */
const ARROW: CaptureFormat = {
  name: 'arrow',
  extensions: ['.arrow', '.arrows'],
  descriptorFields: (path) => metadataFields(readArrowMetadata(path)),
  sampleRateOf: () => undefined,
  warning: (path) =>
    arrowStreamComplete(path)
      ? null
      : `${path}: the Arrow IPC stream has no end-of-stream marker: it may have been cut short between two record batches (the analysis uses the batches present)`,
  blocks: (path, o) => readArrowCapture(path, { ...o, columns: channelColumns(o.columns) }),
  blocksAsync: (path, o) => readArrowCaptureAsync(path, { ...o, columns: channelColumns(o.columns) }),
  reference: (path) => loadReferenceArrow(path),
  referenceLabels(path, modulation) {
    const symbols = loadReferenceArrow(path);
    checkReferenceConstellation(symbols, constellation(modulation), path);
    return compactReferenceOf(symbols, modulation, path);
  },
};

/** The formats the library reads. */
export const CAPTURE_FORMATS: readonly CaptureFormat[] = [CSV, ARROW];

/**
 * The format of a file by its extension (case-insensitive), or undefined.
 * @example formatOfExtension('.Arrows')?.name // 'arrow'
 */
export function formatOfExtension(ext: string): CaptureFormat | undefined {
  const e = ext.toLowerCase();
  return CAPTURE_FORMATS.find((f) => f.extensions.includes(e));
}

/** Every extension the formats read, for messages ('.csv, .arrow or .arrows'). */
export function extensionList(): string {
  const all = CAPTURE_FORMATS.flatMap((f) => f.extensions);
  return `${all.slice(0, -1).join(', ')} or ${all[all.length - 1]}`;
}

/** Descriptor fields from Arrow schema metadata: JSON values, or plain strings. */
function metadataFields(meta: ReadonlyMap<string, string>): Map<string, FieldValue> {
  const fields = new Map<string, FieldValue>();
  for (const [k, text] of meta) {
    if (!(DESCRIPTOR_FIELDS as readonly string[]).includes(k)) continue;
    let value: unknown = text;
    try {
      value = JSON.parse(text);
    } catch {
      // A plain string value ("16qam").
    }
    fields.set(k, { value });
  }
  return fields;
}
