import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { appendJournal, entryProblem, inspectJournal, SET_ASIDE_FILE, tidyJournal } from '../../src/sweep/journal.js';
import { RESULT_COLUMNS, rowFromError, rowProblem } from '../../src/sweep/result-row.js';
import { tempDir } from '../support/temp.js';

const HASH = 'a'.repeat(64);
const SETTINGS = 'b'.repeat(64);
const row = (capture: string) => rowFromError(capture, 'input', `${capture}: not a capture`, HASH);

describe('the journal read like any input', () => {
  it('checks a row column by column', () => {
    expect(rowProblem(row('a.csv'))).toBeNull();
    expect(rowProblem({ ...row('a.csv'), ber: Number.NaN })).toBe(
      "column 'ber': expected a finite number or null, received null",
    );
    expect(rowProblem({ ...row('a.csv'), bits: -1 })).toBe("column 'bits': expected a whole number ≥ 0 or null, received -1");
    expect(rowProblem({ ...row('a.csv'), ok: true })).toBe(
      "column 'ber': expected a value in a measured row (ok true), received null",
    );
    expect(rowProblem({ ...row('a.csv'), extra: 1 })).toBe('column "extra": not a column of the table');
    const { ber: _, ...without } = row('a.csv');
    expect(rowProblem(without)).toBe("column 'ber': expected a finite number or null, received nothing");
    expect(rowProblem([])).toBe('expected an object, received []');
    expect(Object.keys(row('a.csv'))).toEqual([...RESULT_COLUMNS]);
  });

  it('keeps the valid entries, sets the others aside with their line and reason, and rewrites itself tidy', () => {
    const dir = tempDir();
    const path = join(dir, 'journal.jsonl');
    appendJournal(path, { capture: 'a.csv', inputSha256: HASH, settingsSha256: SETTINGS, row: row('a.csv') });
    appendJournal(path, { capture: 'b.csv', inputSha256: HASH, settingsSha256: SETTINGS, row: row('b.csv') });
    const [a, b] = readFileSync(path, 'utf8').trimEnd().split('\n');
    // b's reason edited into another plausible text: its fingerprint no longer matches.
    const edited = b.replace('not a capture', 'measured fine');
    writeFileSync(path, `${a}\nnot json\n${edited}\n\n${a.slice(0, 50)}`);
    const reading = inspectJournal(path);
    expect(reading.entries.map((e) => e.capture)).toEqual(['a.csv']);
    expect(reading.setAside.map((l) => [l.line, l.problem, l.capture])).toEqual([
      [2, 'not a JSON line', null],
      [3, "row: expected the row its fingerprint 'rowSha256' was made from (edited or damaged)", 'b.csv'],
      [5, 'an incomplete last line (a run stopped while writing it)', null],
    ]);
    const notices = tidyJournal(path, reading);
    expect(notices[1]).toBe(
      `${path}:3: set aside to ${SET_ASIDE_FILE}: row: expected the row its fingerprint 'rowSha256' was made from (edited or damaged); b.csv is analysed again unless a valid entry stands for it`,
    );
    expect(readFileSync(path, 'utf8')).toBe(`${a}\n`);
    expect(readFileSync(join(dir, SET_ASIDE_FILE), 'utf8')).toBe(`not json\n${edited}\n${a.slice(0, 50)}\n`);
    expect(inspectJournal(path).untidy).toBe(false);
    expect(entryProblem(JSON.parse(a))).toBeNull();
  });
});
