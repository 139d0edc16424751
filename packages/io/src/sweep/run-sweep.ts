import { rmSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import { LIBRARY_VERSION } from '@intradyne/core';
import type { AnalysisSettings } from '../analysis/analyze-file.js';
import { descriptorPathFor } from '../capture/capture.js';
import { outputFailure } from '../errors/file-system.js';
import { InputError } from '../errors/input-error.js';
import { checkReportPath } from '../report/write-report.js';
import { prepareOutputFolder } from '../write/atomic.js';
import type { SweepOutcome, SweepTask } from './analyze-task.js';
import { settingsFingerprint } from './fingerprint.js';
import { lockFolder } from './folder-lock.js';
import { appendJournal, inspectJournal, JOURNAL_FILE, latestEntries, readJournal, tidyJournal } from './journal.js';
import type { SweepRow } from './result-row.js';
import { inShard, type ShardSpec, shardFolderName } from './shard.js';
import { listingFingerprint, SHARD_RECORD_FILE, SHARD_RECORD_FORMAT, writeShardRecord } from './shard-record.js';
import type { SweepInputs } from './sweep-inputs.js';
import { writeSweepOutputs } from './sweep-outputs.js';
import { runOnWorkers } from './worker-pool.js';

/** Options of {@link runSweep}. */
export interface SweepOptions {
  /** Output folder: results.csv, results.arrow and the journal (for a shard, in its subfolder). */
  readonly out: string;
  /**
   * Analyse only this shard's captures (see `shardOf`), into the subfolder
   * `shard-K-of-N` of `out`, which then also gets the shard record
   * (`shard.json`) that `mergeShards` reads.
   */
  readonly shard?: ShardSpec;
  /** Worker threads (≥ 1). */
  readonly jobs: number;
  /** Analysis settings applied to every capture (descriptor overrides and receiver options). */
  readonly settings: AnalysisSettings;
  /** Also write the HTML report of the final rows there. */
  readonly report?: string;
  /** Called on the main thread as each capture finishes (for a progress bar). */
  readonly onProgress?: (key: string, analysed: boolean) => void;
  /**
   * Called with what the run noticed and did about it (a stale lock taken
   * over, journal lines set aside), one message at a time, for stderr.
   */
  readonly onNotice?: (message: string) => void;
}

/** What a sweep did. */
export interface SweepReport {
  /** Captures in the sweep. */
  readonly captures: number;
  /** The folder written: `out`, or the shard's subfolder of it. */
  readonly out: string;
  /** The shard record written (for a shard only). */
  readonly recordPath?: string;
  /** Captures analysed in this run. */
  readonly analysed: number;
  /** Captures whose stored row was reused (same input hash, same settings). */
  readonly skipped: number;
  /** Rows whose analysis failed or whose capture could not be read. */
  readonly failed: number;
  /** Path of results.csv. */
  readonly csvPath: string;
  /** Path of results.arrow. */
  readonly arrowPath: string;
  /** Path of the resume journal. */
  readonly journalPath: string;
  /** The HTML report, when asked for. */
  readonly reportPath: string | null;
  /** The table, one row per capture in the sweep's order. */
  readonly rows: readonly SweepRow[];
}

/**
 * Default output folder: `<input>-sweep` beside the folder swept or the manifest (its extension dropped).
 * @example defaultSweepOut('data/osnr', 'folder') // 'data/osnr-sweep'
 */
export function defaultSweepOut(input: string, kind: 'folder' | 'manifest'): string {
  const trimmed = input.replace(/[/\\]+$/, '');
  return `${kind === 'manifest' ? trimmed.replace(/\.[^./\\]*$/, '') : trimmed}-sweep`;
}

const inside = (dir: string, p: string) => {
  const r = relative(resolve(dir), resolve(p));
  return r === '' || (!r.startsWith('..') && !r.startsWith('/'));
};

/**
 * Refuses an output folder that is the swept folder, lies inside it, or
 * holds an input file.
 * @throws InputError naming the folder and why
 */
export function checkSweepOut(inputs: SweepInputs, out: string): void {
  if (inputs.kind === 'folder' && inside(inputs.root, out)) {
    throw new InputError(
      { file: out },
      'output folder',
      `a folder outside the swept folder ${inputs.root}`,
      'a folder inside it',
    );
  }
  for (const c of inputs.captures) {
    if (inside(out, c.path) || inside(out, descriptorPathFor(c.path)))
      throw new InputError({ file: out }, 'output folder', 'a folder holding no capture of the sweep', `one holding ${c.path}`);
  }
}

/**
 * Analyses every capture of a sweep (or of one shard of it) on worker
 * threads and writes the results table (CSV and Arrow) into `out` (for a
 * shard, into its subfolder, with its shard record last). Resumable: each
 * finished capture's row is appended to `journal.jsonl` there with its input
 * hash and the settings fingerprint; a capture whose latest stored row has
 * the hash of its files now and the same settings is skipped. The table is
 * then rebuilt from the stored rows, in the sweep's order.
 * With `options.report`, also writes the sweep's HTML report there.
 *
 * The run holds the folder's lock (see `lockFolder`) from start to end, so
 * two sweeps never write one folder. The journal is read like any input:
 * lines that are not valid entries are set aside (see `tidyJournal`) and
 * their captures analysed again. The output paths are checked before any
 * analysis, and the tables and the report are written all or none.
 * @throws InputError when `out` is the swept folder, lies inside it, or
 *   holds an input file, or when the report path is an input; OutputError
 *   when another run holds the folder or an output cannot be written
 * @example const report = await runSweep(sweepInputs('osnr-sweep'), { out: 'results', jobs: 4, settings: {} });
 */
export async function runSweep(inputs: SweepInputs, options: SweepOptions): Promise<SweepReport> {
  checkSweepOut(inputs, options.out);
  const { shard } = options;
  const captures = shard ? inShard(inputs.captures, shard) : inputs.captures;
  const out = shard ? join(options.out, shardFolderName(shard)) : options.out;
  const journalPath = join(out, JOURNAL_FILE);
  const reportInputs = [
    ...inputs.captures.flatMap((c) => [c.path, descriptorPathFor(c.path)]),
    journalPath,
    join(out, 'results.csv'),
    join(out, 'results.arrow'),
  ];
  // Checked before hours of analysis, not after.
  if (options.report) checkReportPath(options.report, reportInputs);
  prepareOutputFolder(out);
  const lock = lockFolder(out, shard ? `sweep of shard ${shard.index}/${shard.count}` : 'sweep');
  try {
    if (lock.tookOverFrom)
      options.onNotice?.(
        `took over the lock of ${out} from process ${lock.tookOverFrom.pid} on ${lock.tookOverFrom.host}, which is no longer running`,
      );
    return await sweepLocked(inputs, options, captures, out, journalPath, reportInputs);
  } finally {
    lock.release();
  }
}

async function sweepLocked(
  inputs: SweepInputs,
  options: SweepOptions,
  captures: SweepInputs['captures'],
  out: string,
  journalPath: string,
  reportInputs: readonly string[],
): Promise<SweepReport> {
  const { shard } = options;
  // A shard is unfinished (for the merge) until this run writes its record again.
  if (shard) {
    const record = join(out, SHARD_RECORD_FILE);
    try {
      rmSync(record, { force: true });
    } catch (e) {
      throw outputFailure(e, record, 'shard record', 'a file that can be removed');
    }
  }
  const reading = inspectJournal(journalPath);
  for (const notice of tidyJournal(journalPath, reading)) options.onNotice?.(notice);
  const settingsSha256 = settingsFingerprint(options.settings);
  const stored = latestEntries(reading.entries, settingsSha256);
  const tasks: SweepTask[] = captures.map((c) => ({
    key: c.key,
    path: c.path,
    storedInputSha256: stored.get(c.key)?.inputSha256 ?? null,
  }));
  const rows = new Map<string, SweepRow>();
  let analysed = 0;
  let skipped = 0;
  await runOnWorkers(tasks, options.jobs, options.settings, (o: SweepOutcome) => {
    if (o.kind === 'skipped') {
      skipped++;
      rows.set(o.key, stored.get(o.key)!.row);
    } else {
      analysed++;
      if (o.store && o.inputSha256 !== null)
        appendJournal(journalPath, { capture: o.key, inputSha256: o.inputSha256, settingsSha256, row: o.row });
      rows.set(o.key, o.row);
    }
    options.onProgress?.(o.key, o.kind === 'analysed');
  });
  // Rebuild from the store (the journal as now written), in the sweep's order;
  // a row that could not be stored (an unexpected error) comes from this run.
  const now = latestEntries(readJournal(journalPath), settingsSha256);
  const table = captures.map((c) => {
    const mine = rows.get(c.key)!;
    const entry = now.get(c.key);
    return entry && entry.inputSha256 === mine.input_sha256 ? entry.row : mine;
  });
  const report = options.report
    ? {
        path: options.report,
        context: {
          source: inputs.root,
          library: 'intradyne',
          version: LIBRARY_VERSION,
          settings: options.settings,
          settingsSha256,
        },
        inputs: reportInputs,
      }
    : undefined;
  const { csvPath, arrowPath, reportPath } = writeSweepOutputs(out, table, report);
  let recordPath: string | undefined;
  if (shard) {
    // Written last: its presence tells the merge that the shard finished.
    const position = new Map(inputs.captures.map((c, i) => [c.key, i]));
    recordPath = writeShardRecord(out, {
      format: SHARD_RECORD_FORMAT,
      shard: shard.index,
      shards: shard.count,
      version: LIBRARY_VERSION,
      settingsSha256,
      settings: options.settings,
      input: { kind: inputs.kind, captures: inputs.captures.length, listingSha256: listingFingerprint(inputs) },
      rows: table.map((row, i) => ({ position: position.get(captures[i].key)!, row })),
    });
  }
  return {
    captures: table.length,
    out,
    recordPath,
    analysed,
    skipped,
    failed: table.filter((r) => r.ok !== true).length,
    csvPath,
    arrowPath,
    journalPath,
    reportPath,
    rows: table,
  };
}
