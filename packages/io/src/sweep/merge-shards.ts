import { type Dirent, existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { inputFailure } from '../errors/file-system.js';
import { InputError } from '../errors/input-error.js';
import { lockFolder } from './folder-lock.js';
import type { SweepRow } from './result-row.js';
import { shardOf } from './shard.js';
import { readShardRecord, SHARD_RECORD_FILE, type ShardRecord } from './shard-record.js';
import { type SweepOutputPaths, writeSweepOutputs } from './sweep-outputs.js';

/** What a merge did. */
export interface MergeReport extends SweepOutputPaths {
  /** Number of shards merged (N). */
  readonly shards: number;
  /** Rows in the merged table: every capture of the sweep. */
  readonly captures: number;
  /** Rows whose analysis failed or whose capture could not be read. */
  readonly failed: number;
  /** The merged table, in the sweep's order. */
  readonly rows: readonly SweepRow[];
}

/** A shard record and the folder it was found in (relative to the results folder). */
interface Found {
  readonly folder: string;
  readonly path: string;
  readonly record: ShardRecord;
}

const SHARD_FOLDER = /^shard-(\d+)-of-(\d+)$/;

/**
 * Merges the shards of a sweep: reads every shard record (`shard.json`) in
 * the subfolders of `dir` (where `intradyne sweep --shard K/N --out DIR`
 * puts them), checks that they make one complete sweep, and writes its
 * table (`results.csv`, `results.arrow`) into `dir`, row for row and byte for
 * byte what one sweep of the same captures with the same settings writes.
 *
 * Refused, with the folders at fault named: no shard at all; shards of
 * different counts N; a shard missing (or unfinished: its folder has no
 * record) or present twice; shards run with different library versions or
 * settings, or over different inputs (another folder or manifest, or the
 * same one with captures added or removed between shards); a row in a
 * shard it does not hash to, or a capture missing or present twice.
 * With `options.report`, also writes the sweep's HTML report there, the
 * same page one sweep with `--report` gives.
 * The merge holds the results folder's lock (see `lockFolder`) while it
 * reads and writes, so that it never runs beside a sweep into that folder.
 * @throws InputError naming the results folder or the shard record at fault,
 *   or when the report path is a shard's record; OutputError when another
 *   run holds the folder or an output cannot be written
 * @example mergeShards('lab-sweep') // after shards 0/4 … 3/4 wrote lab-sweep/shard-K-of-4
 */
export function mergeShards(dir: string, options: { readonly report?: string } = {}): MergeReport {
  if (!existsSync(dir) || !statSync(dir).isDirectory())
    throw new InputError({ file: dir }, 'results folder', 'the output folder of a sharded sweep', 'no such folder');
  const lock = lockFolder(dir, 'merge');
  try {
    return mergeLocked(dir, options);
  } finally {
    lock.release();
  }
}

function mergeLocked(dir: string, options: { readonly report?: string }): MergeReport {
  const found: Found[] = [];
  const unfinished: string[] = [];
  let entries: Dirent[];
  try {
    entries = readdirSync(dir, { withFileTypes: true });
  } catch (e) {
    throw inputFailure(e, dir, 'results folder', 'a readable folder');
  }
  for (const e of entries.sort((a, b) => (a.name < b.name ? -1 : 1))) {
    if (!e.isDirectory()) continue;
    const path = join(dir, e.name, SHARD_RECORD_FILE);
    if (existsSync(path)) found.push({ folder: e.name, path, record: readShardRecord(path) });
    else if (SHARD_FOLDER.test(e.name)) unfinished.push(e.name);
  }
  if (found.length === 0) {
    throw new InputError(
      { file: dir },
      'shards',
      `subfolders shard-K-of-N holding a ${SHARD_RECORD_FILE} (written by 'intradyne sweep --shard K/N --out ${dir}' when a shard finishes)`,
      unfinished.length > 0 ? `only unfinished shards: ${unfinished.join(', ')}` : 'none',
    );
  }
  const first = found[0];
  const count = first.record.shards;
  const label = (f: Found) => `shard ${f.record.shard}/${f.record.shards} in ${f.folder}`;

  const counts = found.filter((f) => f.record.shards !== count);
  if (counts.length > 0) {
    throw new InputError(
      { file: dir },
      'shards',
      `shards of one split (all N = ${count}, as ${label(first)}); remove the folders of the other split`,
      counts.map(label).join(', '),
    );
  }
  const byIndex = new Map<number, Found>();
  for (const f of found) {
    const twin = byIndex.get(f.record.shard);
    if (twin)
      throw new InputError(
        { file: dir },
        `shard ${f.record.shard}/${count}`,
        'one folder holding it',
        `two: ${twin.folder} and ${f.folder}`,
      );
    byIndex.set(f.record.shard, f);
  }
  const missing: string[] = [];
  for (let k = 0; k < count; k++) {
    if (byIndex.has(k)) continue;
    const folder = `shard-${k}-of-${count}`;
    missing.push(
      unfinished.includes(folder) ? `${k}/${count} (${folder} has no ${SHARD_RECORD_FILE}: it did not finish)` : `${k}/${count}`,
    );
  }
  if (missing.length > 0)
    throw new InputError(
      { file: dir },
      'shards',
      `all ${count} shards 0/${count} to ${count - 1}/${count}`,
      `missing ${missing.join(', ')}`,
    );

  for (const f of found) {
    const r = f.record;
    if (r.version !== first.record.version)
      throw new InputError({ file: f.path }, 'library version', `${first.record.version}, as ${label(first)}`, r.version);
    if (r.settingsSha256 !== first.record.settingsSha256)
      throw new InputError(
        { file: f.path },
        'analysis settings',
        `the settings of ${label(first)}: ${JSON.stringify(first.record.settings)}`,
        JSON.stringify(r.settings),
      );
    if (r.input.captures !== first.record.input.captures || r.input.listingSha256 !== first.record.input.listingSha256)
      throw new InputError(
        { file: f.path },
        'sweep input',
        `the captures ${label(first)} was split from (${first.record.input.captures} of them)`,
        `another list of ${r.input.captures} captures (a different folder or manifest, or captures added or removed between shards)`,
      );
  }

  const total = first.record.input.captures;
  const table: (SweepRow | undefined)[] = new Array(total);
  for (const f of found) {
    for (const { position, row } of f.record.rows) {
      const key = row.capture as string;
      if (shardOf(key, count) !== f.record.shard)
        throw new InputError(
          { file: f.path },
          `row ${key}`,
          `a capture of shard ${f.record.shard}/${count}`,
          `one of shard ${shardOf(key, count)}/${count}`,
        );
      if (position >= total) throw new InputError({ file: f.path }, `row ${key}`, `a position below ${total}`, String(position));
      if (table[position] !== undefined)
        throw new InputError(
          { file: f.path },
          `row ${key}`,
          `a position of its own`,
          `${position}, the place of ${table[position]!.capture}`,
        );
      table[position] = row;
    }
  }
  let absent = 0;
  for (let i = 0; i < total; i++) if (table[i] === undefined) absent++;
  if (absent > 0)
    throw new InputError(
      { file: dir },
      'rows',
      `one row per capture of the sweep (${total})`,
      `${absent} captures without a row`,
    );

  const rows = table as SweepRow[];
  return {
    shards: count,
    captures: rows.length,
    failed: rows.filter((r) => r.ok !== true).length,
    rows,
    ...writeSweepOutputs(
      dir,
      rows,
      options.report === undefined
        ? undefined
        : {
            path: options.report,
            context: {
              source: dir,
              library: 'intradyne',
              version: first.record.version,
              settings: first.record.settings,
              settingsSha256: first.record.settingsSha256,
            },
            inputs: found.map((f) => f.path),
          },
    ),
  };
}
