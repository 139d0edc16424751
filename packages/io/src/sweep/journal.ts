import { createHash } from 'node:crypto';
import { appendFileSync, existsSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { outputFailure } from '../errors/file-system.js';
import { readInputBytes } from '../load/open-file.js';
import { writeFileAtomic } from '../write/atomic.js';
import { rowProblem, type SweepRow } from './result-row.js';

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
  /**
   * SHA-256 (hex) of the row as written (`JSON.stringify(row)`): a row
   * edited by hand or damaged into other plausible numbers no longer
   * matches, and is set aside instead of reaching the table.
   */
  readonly rowSha256: string;
}

/** The journal's file name inside the output folder. */
export const JOURNAL_FILE = 'journal.jsonl';

/** Where lines set aside from the journal are kept, beside it, for a person to look at. */
export const SET_ASIDE_FILE = 'journal-set-aside.jsonl';

/** A line of the journal that is not a valid entry. */
export interface SetAsideLine {
  /** 1-based line number in the journal. */
  readonly line: number;
  /** The line as it was. */
  readonly text: string;
  /** What is wrong with it, in words. */
  readonly problem: string;
  /** The capture it names, when that much could be read. */
  readonly capture: string | null;
}

/** A journal as read: its valid entries, in order, and its other lines. */
export interface JournalReading {
  /** The valid entries, later ones after earlier ones. */
  readonly entries: JournalEntry[];
  /** The lines that are not valid entries. */
  readonly setAside: SetAsideLine[];
  /** Whether the file needs rewriting: lines to set aside, or a last line without its newline. */
  readonly untidy: boolean;
}

const SHA256 = /^[0-9a-f]{64}$/;
const lenient = new TextDecoder('utf-8', { fatal: false });
const ENTRY_KEYS = ['capture', 'inputSha256', 'settingsSha256', 'row', 'rowSha256'];

/** The fingerprint of a row as the journal stores it. */
const rowFingerprint = (row: unknown) => createHash('sha256').update(JSON.stringify(row)).digest('hex');

/**
 * What is wrong with a parsed journal line, in words, or null for a valid
 * entry: an object with exactly the keys of {@link JournalEntry}, a
 * capture key, SHA-256 fingerprints in hex, and a row that passes
 * `rowProblem`, names the same capture and input hash, and matches its
 * fingerprint `rowSha256`.
 * @example entryProblem({ capture: 'a.csv' }) // "key 'inputSha256': expected a SHA-256 in hex, received nothing"
 */
export function entryProblem(value: unknown): string | null {
  if (value === null || typeof value !== 'object' || Array.isArray(value)) return 'expected a JSON object';
  const e = value as Record<string, unknown>;
  for (const k of Object.keys(e)) if (!ENTRY_KEYS.includes(k)) return `key ${JSON.stringify(k).slice(0, 40)}: not a journal key`;
  if (typeof e.capture !== 'string' || e.capture === '') return "key 'capture': expected the capture's key";
  for (const k of ['inputSha256', 'settingsSha256', 'rowSha256'] as const)
    if (typeof e[k] !== 'string' || !SHA256.test(e[k] as string))
      return `key '${k}': expected a SHA-256 in hex, received ${e[k] === undefined ? 'nothing' : JSON.stringify(e[k]).slice(0, 40)}`;
  const problem = rowProblem(e.row);
  if (problem !== null) return `row: ${problem}`;
  const row = e.row as SweepRow;
  if (row.capture !== e.capture) return `row: column 'capture': expected ${JSON.stringify(e.capture)}, as the entry`;
  if (row.input_sha256 !== e.inputSha256) return "row: column 'input_sha256': expected the entry's inputSha256";
  if (rowFingerprint(e.row) !== e.rowSha256)
    return "row: expected the row its fingerprint 'rowSha256' was made from (edited or damaged)";
  return null;
}

/**
 * Reads a sweep journal and checks every line like any input: a line that
 * does not parse, or is not a valid entry (see {@link entryProblem}), is
 * set aside — a run killed while writing leaves a torn last line; a hand
 * edit or a damaged disk, others. The journal only stores results that can
 * be made again, so a set-aside line costs one analysis, never a wrong row.
 * @returns the entries and the lines set aside; empty when the file does not exist
 * @throws InputError when the journal cannot be read (a folder, a FIFO, not UTF-8…)
 * @example inspectJournal('lab-sweep/journal.jsonl').setAside.map((l) => l.line)
 */
export function inspectJournal(path: string): JournalReading {
  if (!existsSync(path)) return { entries: [], setAside: [], untidy: false };
  // Decoded leniently: a line damaged into bytes that are not UTF-8 (or the zeros a crash can leave at
  // the end of a file) is one line to set aside, not a journal to refuse.
  const text = lenient.decode(readInputBytes(path, 'sweep journal'));
  const lines = text.split('\n');
  // The piece after the last newline: empty for a journal whose last line is complete.
  const tail = lines.pop() ?? '';
  if (tail !== '') lines.push(tail);
  const entries: JournalEntry[] = [];
  const setAside: SetAsideLine[] = [];
  lines.forEach((line, i) => {
    if (line.trim() === '') return;
    const torn = tail !== '' && i === lines.length - 1;
    let value: unknown;
    try {
      value = JSON.parse(line);
    } catch {
      if (line.replaceAll('\u0000', '').trim() === '' && !torn) return; // zeros left by a crash: nothing was there
      const problem = torn ? 'an incomplete last line (a run stopped while writing it)' : 'not a JSON line';
      setAside.push({ line: i + 1, text: line, problem, capture: null });
      return;
    }
    const problem = entryProblem(value);
    if (problem === null) entries.push(value as JournalEntry);
    else {
      const capture = (value as { capture?: unknown } | null)?.capture;
      setAside.push({ line: i + 1, text: line, problem, capture: typeof capture === 'string' ? capture : null });
    }
  });
  return { entries, setAside, untidy: setAside.length > 0 || tail !== '' };
}

/**
 * The valid entries of a sweep journal, in the order appended (see
 * {@link inspectJournal}; the lines set aside are left out).
 * @returns the entries; empty when the file does not exist
 * @example readJournal('osnr-sweep-sweep/journal.jsonl').map((e) => e.capture)
 */
export function readJournal(path: string): JournalEntry[] {
  return inspectJournal(path).entries;
}

/**
 * Puts a journal in order before a run appends to it: the lines set aside
 * are appended to {@link SET_ASIDE_FILE} beside it (kept for a person to
 * look at), then the journal is rewritten, atomically, with its valid lines
 * only. Call with the sweep's folder lock held.
 * @returns one notice per line set aside, naming the journal, the line, what
 *   is wrong and the capture analysed again
 * @throws OutputError when the files cannot be written
 */
export function tidyJournal(path: string, reading: JournalReading): string[] {
  if (!reading.untidy) return [];
  if (reading.setAside.length > 0) {
    const asidePath = join(dirname(path), SET_ASIDE_FILE);
    // What was set aside before is kept byte for byte, whatever it holds.
    const before = existsSync(asidePath) ? readInputBytes(asidePath, 'set-aside journal lines') : new Uint8Array(0);
    const added = reading.setAside.map((l) => `${l.text}\n`).join('');
    writeFileAtomic(
      asidePath,
      (append) => {
        append(before);
        append(added);
      },
      { overwrite: true },
      'set-aside journal lines',
    );
  }
  const kept = reading.entries.map((e) => `${JSON.stringify(e)}\n`).join('');
  writeFileAtomic(path, (append) => append(kept), { overwrite: true }, 'sweep journal');
  return reading.setAside.map(
    (l) =>
      `${path}:${l.line}: set aside to ${SET_ASIDE_FILE}: ${l.problem}` +
      (l.capture !== null ? `; ${l.capture} is analysed again unless a valid entry stands for it` : ''),
  );
}

/**
 * Appends one entry as a single line, in one write of a few kilobytes,
 * with the row's fingerprint `rowSha256`.
 * @throws OutputError when the journal cannot be written (a full disk…)
 */
export function appendJournal(path: string, entry: Omit<JournalEntry, 'rowSha256'>): void {
  const line = JSON.stringify({ ...entry, rowSha256: rowFingerprint(entry.row) });
  try {
    appendFileSync(path, `${line}\n`);
  } catch (e) {
    throw outputFailure(e, path, 'sweep journal', 'a writable file with room for one more row');
  }
}

/** The latest entry per capture made with these settings, by capture key. */
export function latestEntries(entries: readonly JournalEntry[], settingsSha256: string): Map<string, JournalEntry> {
  const latest = new Map<string, JournalEntry>();
  for (const e of entries) if (e.settingsSha256 === settingsSha256) latest.set(e.capture, e);
  return latest;
}
