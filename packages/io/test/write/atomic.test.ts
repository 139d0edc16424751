import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { OutputExistsError, writeFileAtomic } from '../../src/index.js';

describe('atomic writes', () => {
  it('leaves neither a partial file nor a temporary one when the writer fails', () => {
    const dir = mkdtempSync(join(tmpdir(), 'intradyne-atomic-'));
    try {
      const target = join(dir, 'out.csv');
      expect(() =>
        writeFileAtomic(target, (append) => {
          append('half a file');
          throw new Error('interrupted');
        }),
      ).toThrow('interrupted');
      expect(readdirSync(dir)).toEqual([]);
      writeFileAtomic(target, (append) => append('whole'));
      expect(readFileSync(target, 'utf8')).toBe('whole');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('never replaces an existing file unless told to', () => {
    const dir = mkdtempSync(join(tmpdir(), 'intradyne-atomic-'));
    try {
      const target = join(dir, 'input.csv');
      writeFileSync(target, 'user data');
      expect(() => writeFileAtomic(target, (a) => a('x'))).toThrow(OutputExistsError);
      expect(readFileSync(target, 'utf8')).toBe('user data');
      writeFileAtomic(target, (a) => a('x'), { overwrite: true });
      expect(readFileSync(target, 'utf8')).toBe('x');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
