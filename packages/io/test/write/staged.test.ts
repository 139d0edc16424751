import { linkSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { OutputError, OutputExistsError } from '../../src/errors/output-error.js';
import { checkOutputFile, commitTogether, prepareOutputFolder, stageFile } from '../../src/write/atomic.js';
import { caught, tempDir } from '../support/temp.js';

describe('staged writes', () => {
  it('puts nothing in place until commit, and nothing at all after discard', () => {
    const dir = tempDir();
    const staged = stageFile(join(dir, 'a.txt'), (append) => append('whole'));
    expect(readdirSync(dir)).toHaveLength(1);
    expect(readdirSync(dir)[0]).toMatch(/^\.a\.txt\.\d+\.[0-9a-f]{8}\.tmp$/);
    staged.commit();
    expect(readdirSync(dir)).toEqual(['a.txt']);
    expect(readFileSync(join(dir, 'a.txt'), 'utf8')).toBe('whole');
    stageFile(join(dir, 'b.txt'), (append) => append('x')).discard();
    expect(readdirSync(dir)).toEqual(['a.txt']);
  });

  it('commits several files together, or none when one cannot be written', () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'results.csv'), 'old csv');
    mkdirSync(join(dir, 'results.arrow'));
    const e = caught(() =>
      commitTogether([
        () => stageFile(join(dir, 'results.csv'), (a) => a('new csv'), { overwrite: true }),
        () => stageFile(join(dir, 'results.arrow'), (a) => a('new arrow'), { overwrite: true }),
      ]),
    );
    expect(e).toBeInstanceOf(OutputError);
    expect(e.message).toMatch(/results\.arrow: output file: expected a path for a file, received a folder/);
    expect(readFileSync(join(dir, 'results.csv'), 'utf8')).toBe('old csv');
    expect(readdirSync(dir).sort()).toEqual(['results.arrow', 'results.csv']);
  });

  it('never replaces a file created after the check, without overwrite', () => {
    const dir = tempDir();
    const staged = stageFile(join(dir, 'mine.json'), (a) => a('{}'));
    writeFileSync(join(dir, 'mine.json'), 'the user wrote this meanwhile');
    expect(() => staged.commit()).toThrow(OutputExistsError);
    expect(readFileSync(join(dir, 'mine.json'), 'utf8')).toBe('the user wrote this meanwhile');
    expect(readdirSync(dir)).toEqual(['mine.json']);
  });

  it('checks an output path before any work', () => {
    const dir = tempDir();
    expect(() => checkOutputFile(join(dir, 'missing', 'r.html'), 'report')).toThrow(
      /r\.html: report: expected a path in an existing folder \(.*missing\), received ENOENT/,
    );
    writeFileSync(join(dir, 'file'), '');
    expect(() => checkOutputFile(join(dir, 'file', 'r.html'), 'report')).toThrow(
      /report: expected a path in a folder \(.*file\), received .*file is a regular file/,
    );
    linkSync(join(dir, 'file'), join(dir, 'hard'));
    expect(() => checkOutputFile(join(dir, 'hard'))).toThrow(OutputExistsError);
    checkOutputFile(join(dir, 'hard'), 'report', { overwrite: true });
    expect(() => prepareOutputFolder(join(dir, 'file'))).toThrow(
      /output folder: expected a folder \(created when missing\), received a regular file/,
    );
    prepareOutputFolder(join(dir, 'a', 'b'));
    expect(readdirSync(join(dir, 'a'))).toEqual(['b']);
  });
});
