import { join } from 'node:path';
import { Sha256 } from '@intradyne/core';
import type { AnalysisSettings } from '../analysis/analyze-file.js';
import { parseJsonFile } from '../capture/json-positions.js';
import { InputError } from '../errors/input-error.js';
import { readInputText } from '../load/open-file.js';
import { writeJsonAtomic } from '../write/csv.js';
import { rowProblem, type SweepRow } from './result-row.js';
import type { SweepInputs } from './sweep-inputs.js';

/** The file a finished shard writes into its folder, last, atomically: its rows and what made them. */
export const SHARD_RECORD_FILE = 'shard.json';

/** The value of a shard record's `format` field. */
export const SHARD_RECORD_FORMAT = 'intradyne sweep shard, version 1';

/** A row of a shard with its place in the whole sweep's order. */
export interface PlacedRow {
  /** 0-based position of the capture in the sweep's order (sorted folder keys, or the manifest's order). */
  readonly position: number;
  /** The capture's row of the results table. */
  readonly row: SweepRow;
}

/**
 * What a finished shard of a sweep leaves for the merge: which shard it is,
 * the library version and settings it ran with, what the whole sweep was
 * (so that shards of different inputs are not merged) and its rows.
 */
export interface ShardRecord {
  /** {@link SHARD_RECORD_FORMAT}: what the file is, and which layout. */
  readonly format: typeof SHARD_RECORD_FORMAT;
  /** Shard index, 0 ≤ shard < shards. */
  readonly shard: number;
  /** Number of shards N of the split. */
  readonly shards: number;
  /** The library version (`LIBRARY_VERSION`) the shard ran with. */
  readonly version: string;
  /** `settingsFingerprint` of the settings (covers the version too). */
  readonly settingsSha256: string;
  /** The analysis settings themselves (named when two shards disagree). */
  readonly settings: AnalysisSettings;
  /** The whole sweep: folder or manifest, its number of captures, and the SHA-256 of its capture keys in order. */
  readonly input: {
    /** A folder or a manifest. */
    readonly kind: SweepInputs['kind'];
    /** Captures of the whole sweep. */
    readonly captures: number;
    /** SHA-256 of the whole sweep's capture keys, in order, one per line. */
    readonly listingSha256: string;
  };
  /** The shard's rows, in the sweep's order. */
  readonly rows: readonly PlacedRow[];
  /** SHA-256 (hex) of `rows` as written (`JSON.stringify(rows)`): rows edited or damaged no longer match. */
  readonly rowsSha256: string;
}

const UTF8 = new TextEncoder();

/**
 * SHA-256 (hex) of a sweep's capture keys in its order, one per line: equal
 * for two shards of the same folder or manifest on any machine (the keys are
 * relative to the sweep root).
 */
export function listingFingerprint(inputs: SweepInputs): string {
  return new Sha256().update(UTF8.encode(inputs.captures.map((c) => `${c.key}\n`).join(''))).hex();
}

/** SHA-256 (hex) of a shard's rows as written. */
const rowsFingerprint = (rows: unknown) => new Sha256().update(UTF8.encode(JSON.stringify(rows))).hex();

/** Writes a shard's record into its folder, atomically, replacing an earlier one, with the rows' fingerprint. */
export function writeShardRecord(dir: string, record: Omit<ShardRecord, 'rowsSha256'>): string {
  const path = join(dir, SHARD_RECORD_FILE);
  writeJsonAtomic(path, { ...record, rowsSha256: rowsFingerprint(record.rows) }, { overwrite: true });
  return path;
}

const isWhole = (v: unknown): v is number => typeof v === 'number' && Number.isSafeInteger(v) && v >= 0;

/**
 * Reads and checks a shard record, every row as `rowProblem` checks a row,
 * and the rows against their fingerprint `rowsSha256`.
 * @throws InputError naming the file and the field or row that is missing or wrong
 * @example readShardRecord('lab-sweep/shard-2-of-4/shard.json').rows.length // captures of shard 2
 */
export function readShardRecord(path: string): ShardRecord {
  const doc = parseJsonFile(readInputText(path, 'shard record'), path) as Record<string, unknown>;
  const bad = (field: string, expected: string) =>
    new InputError({ file: path }, `field '${field}'`, expected, JSON.stringify(doc?.[field] ?? null).slice(0, 80));
  if (doc === null || typeof doc !== 'object') throw new InputError({ file: path }, 'shard record', 'a JSON object', String(doc));
  if (doc.format !== SHARD_RECORD_FORMAT) throw bad('format', JSON.stringify(SHARD_RECORD_FORMAT));
  if (!isWhole(doc.shards) || doc.shards < 1) throw bad('shards', 'a positive whole number');
  if (!isWhole(doc.shard) || doc.shard >= doc.shards) throw bad('shard', `a whole number below shards (${doc.shards})`);
  if (typeof doc.version !== 'string') throw bad('version', 'the library version');
  if (typeof doc.settingsSha256 !== 'string') throw bad('settingsSha256', 'a SHA-256 in hex');
  if (doc.settings === null || typeof doc.settings !== 'object') throw bad('settings', 'the analysis settings');
  const input = doc.input as Record<string, unknown> | null;
  if (input === null || typeof input !== 'object' || !isWhole(input.captures) || typeof input.listingSha256 !== 'string')
    throw bad('input', 'the sweep input: { kind, captures, listingSha256 }');
  if (!Array.isArray(doc.rows)) throw bad('rows', 'an array of { position, row }');
  for (const [i, r] of (doc.rows as { position?: unknown; row?: { capture?: unknown } }[]).entries()) {
    if (!isWhole(r?.position) || typeof r.row?.capture !== 'string')
      throw new InputError({ file: path }, 'rows', 'entries { position, row } with a capture', JSON.stringify(r).slice(0, 80));
    // Rows are checked like any input, so that a damaged record never reaches the merged table.
    const problem = rowProblem(r.row);
    if (problem !== null)
      throw new InputError(
        { file: path },
        `row ${i + 1} (${JSON.stringify(r.row.capture).slice(0, 60)})`,
        'a results row of this version',
        problem,
      );
  }
  if (doc.rowsSha256 !== rowsFingerprint(doc.rows))
    throw bad('rowsSha256', 'the fingerprint of the rows written with it (the rows were edited or damaged)');
  return doc as unknown as ShardRecord;
}
