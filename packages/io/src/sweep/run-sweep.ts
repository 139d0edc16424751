import { mkdirSync } from 'node:fs';
import { join, relative, resolve } from 'node:path';
import type { AnalysisSettings } from '../analysis/analyze-file.js';
import { descriptorPathFor } from '../capture/capture.js';
import { InputError } from '../errors/input-error.js';
import type { SweepOutcome, SweepTask } from './analyze-task.js';
import { settingsFingerprint } from './fingerprint.js';
import { appendJournal, closeTornLine, JOURNAL_FILE, latestEntries, readJournal } from './journal.js';
import type { SweepRow } from './result-row.js';
import { writeResultsCsv, writeResultsTableArrow } from './results-table.js';
import type { SweepInputs } from './sweep-inputs.js';
import { runOnWorkers } from './worker-pool.js';

/** Options of {@link runSweep}. */
export interface SweepOptions {
  /** Output folder: results.csv, results.arrow and the journal. */
  readonly out: string;
  /** Worker threads (≥ 1). */
  readonly jobs: number;
  /** Analysis settings applied to every capture (descriptor overrides and receiver options). */
  readonly settings: AnalysisSettings;
  /** Called on the main thread as each capture finishes (for a progress bar). */
  readonly onProgress?: (key: string, analysed: boolean) => void;
}

/** What a sweep did. */
export interface SweepReport {
  /** Captures in the sweep. */
  readonly captures: number;
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
 * Analyses every capture of a sweep on worker threads and writes the
 * results table (CSV and Arrow) into `out`. Resumable: each finished
 * capture's row is appended to `out/journal.jsonl` with its input hash and
 * the settings fingerprint; a capture whose latest stored row has the hash
 * of its files now and the same settings is skipped. The table is then
 * rebuilt from the stored rows, in the sweep's order.
 * @throws InputError when `out` is the swept folder, lies inside it, or
 *   holds an input file
 * @example const report = await runSweep(sweepInputs('osnr-sweep'), { out: 'results', jobs: 4, settings: {} });
 */
export async function runSweep(inputs: SweepInputs, options: SweepOptions): Promise<SweepReport> {
  const { out } = options;
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
  mkdirSync(out, { recursive: true });
  const journalPath = join(out, JOURNAL_FILE);
  closeTornLine(journalPath);
  const settingsSha256 = settingsFingerprint(options.settings);
  const stored = latestEntries(readJournal(journalPath), settingsSha256);
  const tasks: SweepTask[] = inputs.captures.map((c) => ({
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
  const table = inputs.captures.map((c) => {
    const mine = rows.get(c.key)!;
    const entry = now.get(c.key);
    return entry && entry.inputSha256 === mine.input_sha256 ? entry.row : mine;
  });
  const csvPath = join(out, 'results.csv');
  const arrowPath = join(out, 'results.arrow');
  writeResultsCsv(csvPath, table);
  writeResultsTableArrow(arrowPath, table);
  return {
    captures: table.length,
    analysed,
    skipped,
    failed: table.filter((r) => r.ok !== true).length,
    csvPath,
    arrowPath,
    journalPath,
    rows: table,
  };
}
