import { appendFileSync, existsSync, readFileSync } from 'node:fs';
import type { SweepRow } from './result-row.js';

/** One stored result: the row and what it was made from. */
export interface JournalEntry {
  /** The capture's key: its path relative to the sweep root. */
  readonly capture: string;
  /** SHA-256 of its data, descriptor and reference bytes. */
  readonly inputSha256: string;
  /** SHA-256 of the library version and the analysis settings. */
  readonly settingsSha256: string;
  /** The result row. */
  readonly row: SweepRow;
}

/** The journal's file name inside the output folder. */
export const JOURNAL_FILE = 'journal.jsonl';

/**
 * Reads a sweep journal: one JSON entry per line, in the order appended. A
 * line that does not parse (the last line of a run killed while writing it)
 * is ignored, so its capture is analysed again.
 * @returns the entries, later ones after earlier ones; empty when the file does not exist
 * @example readJournal('osnr-sweep-sweep/journal.jsonl').map((e) => e.capture)
 */
export function readJournal(path: string): JournalEntry[] {
  if (!existsSync(path)) return [];
  const entries: JournalEntry[] = [];
  for (const line of readFileSync(path, 'utf8').split('\n')) {
    if (line === '') continue;
    try {
      const e = JSON.parse(line) as JournalEntry;
      if (typeof e?.capture === 'string' && typeof e.inputSha256 === 'string' && e.row) entries.push(e);
    } catch {
      // A torn line: ignored.
    }
  }
  return entries;
}

/** Appends one entry as a single line, in one write of a few kilobytes. */
export function appendJournal(path: string, entry: JournalEntry): void {
  appendFileSync(path, `${JSON.stringify(entry)}\n`);
}

/**
 * Ends a torn last line (left by a run killed while writing it) with a
 * newline, so that the next entry starts a line of its own. Call once before
 * appending.
 */
export function closeTornLine(path: string): void {
  if (!existsSync(path)) return;
  const text = readFileSync(path, 'utf8');
  if (text.length > 0 && !text.endsWith('\n')) appendFileSync(path, '\n');
}

/** The latest entry per capture made with these settings, by capture key. */
export function latestEntries(entries: readonly JournalEntry[], settingsSha256: string): Map<string, JournalEntry> {
  const latest = new Map<string, JournalEntry>();
  for (const e of entries) if (e.settingsSha256 === settingsSha256) latest.set(e.capture, e);
  return latest;
}
