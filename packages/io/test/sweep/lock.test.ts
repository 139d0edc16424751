import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { OutputError } from '../../src/errors/output-error.js';
import { LOCK_FILE, lockFolder } from '../../src/sweep/folder-lock.js';
import { caught, tempDir } from '../support/temp.js';

/** The id of a process that has ended. */
const deadPid = () => Number(execFileSync(process.execPath, ['-e', 'console.log(process.pid)'], { encoding: 'utf8' }).trim());

describe("a sweep output folder's lock", () => {
  it('holds the process id, the host and the time, refuses a second holder, and is released', () => {
    const dir = tempDir();
    const lock = lockFolder(dir, 'sweep');
    const holder = JSON.parse(readFileSync(join(dir, LOCK_FILE), 'utf8'));
    expect(holder).toMatchObject({ pid: process.pid, host: hostname(), purpose: 'sweep' });
    expect(Date.parse(holder.since)).not.toBeNaN();
    const e = caught(() => lockFolder(dir, 'merge'));
    expect(e).toBeInstanceOf(OutputError);
    expect(e.message).toMatch(/received one locked: sweep by process \d+ on /);
    lock.release();
    expect(existsSync(join(dir, LOCK_FILE))).toBe(false);
    lockFolder(dir, 'merge').release();
  });

  it('takes over the lock of a process that is gone, and says whose it was', () => {
    const dir = tempDir();
    const gone = { pid: deadPid(), host: hostname(), since: '2024-05-01T10:00:00.000Z', purpose: 'sweep' };
    writeFileSync(join(dir, LOCK_FILE), JSON.stringify(gone));
    const lock = lockFolder(dir, 'sweep');
    expect(lock.tookOverFrom).toEqual(gone);
    expect(JSON.parse(readFileSync(join(dir, LOCK_FILE), 'utf8')).pid).toBe(process.pid);
    lock.release();
  });

  it('releases only its own lock: one replaced by hand meanwhile stays', () => {
    const dir = tempDir();
    const lock = lockFolder(dir, 'sweep');
    const other = JSON.stringify({ pid: 1, host: 'elsewhere', since: 'x', purpose: 'sweep' });
    writeFileSync(join(dir, LOCK_FILE), other);
    lock.release();
    expect(readFileSync(join(dir, LOCK_FILE), 'utf8')).toBe(other);
  });
});
