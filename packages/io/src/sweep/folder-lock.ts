import { closeSync, existsSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';
import { hostname } from 'node:os';
import { join } from 'node:path';
import { isSystemError, outputFailure } from '../errors/file-system.js';
import { InputError } from '../errors/input-error.js';
import { OutputError } from '../errors/output-error.js';
import { readInputText } from '../load/open-file.js';

/** The lock file a sweep or a merge holds in the folder it writes. */
export const LOCK_FILE = 'sweep.lock';

/** Who holds a folder: written into the lock file as JSON. */
export interface LockHolder {
  /** The holding process. */
  readonly pid: number;
  /** The machine it runs on (os.hostname()). */
  readonly host: string;
  /** When it took the lock (ISO 8601). */
  readonly since: string;
  /** What it is doing ('sweep', 'merge'). */
  readonly purpose: string;
}

/** A lock taken by {@link lockFolder}. */
export interface FolderLock {
  /** The lock file. */
  readonly path: string;
  /** The holder whose lock was taken over because its process is gone, if any. */
  readonly tookOverFrom: LockHolder | null;
  /** Removes the lock file (when it is still this process's). */
  release(): void;
}

/** Attempts at taking a lock whose holder vanishes or is being written meanwhile. */
const ATTEMPTS = 20;
/** Wait between two attempts, ms: a holder writes its file within microseconds of creating it. */
const PAUSE_MS = 50;

const pause = (ms: number) => Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);

/** Whether a process of this machine is alive (signal 0 checks without sending anything). */
function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    // EPERM: it exists but belongs to another user.
    return isSystemError(e) && e.code === 'EPERM';
  }
}

function parseHolder(text: string): LockHolder | null {
  try {
    const h = JSON.parse(text) as Partial<LockHolder>;
    return typeof h?.pid === 'number' && Number.isSafeInteger(h.pid) && h.pid > 0 && typeof h.host === 'string'
      ? { pid: h.pid, host: h.host, since: String(h.since ?? ''), purpose: String(h.purpose ?? '') }
      : null;
  } catch {
    return null;
  }
}

const describeHolder = (h: LockHolder) =>
  `${h.purpose || 'a run'} by process ${h.pid} on ${h.host} since ${h.since || 'an unknown time'}`;

/**
 * Takes the exclusive lock of a folder that a sweep (or a merge) writes:
 * the lock file {@link LOCK_FILE} created with the exclusive 'wx' flag,
 * holding the process id, the host and the time. While it is held, a second
 * sweep or merge into the same folder is refused instead of redoing every
 * capture beside the first. A lock left by a process of this machine that
 * is no longer running (killed, or its machine restarted) is taken over,
 * and `tookOverFrom` says whose it was. A lock of another machine cannot be
 * checked and is never taken over.
 * @param purpose what the holder does, for the other runs' messages ('sweep', 'merge')
 * @throws OutputError naming the folder and the holder while another run
 *   holds it (or when the lock file cannot be written); InputError when the
 *   lock file cannot be read as a lock
 * @example const lock = lockFolder('lab-sweep', 'sweep'); try { … } finally { lock.release(); }
 */
export function lockFolder(dir: string, purpose: string): FolderLock {
  const path = join(dir, LOCK_FILE);
  const me: LockHolder = { pid: process.pid, host: hostname(), since: new Date().toISOString(), purpose };
  const text = `${JSON.stringify(me)}\n`;
  let tookOverFrom: LockHolder | null = null;
  for (let attempt = 0; attempt < ATTEMPTS; attempt++) {
    if (create(path, text)) {
      return {
        path,
        tookOverFrom,
        release: () => {
          // Only our own lock: a folder whose lock was removed by hand may have a new holder.
          try {
            if (existsSync(path) && readInputText(path, 'lock file') === text) rmSync(path, { force: true });
          } catch {
            // Left behind, it is taken over by the next run: its process is gone.
          }
        },
      };
    }
    let current: string;
    try {
      current = readInputText(path, 'lock file');
    } catch (e) {
      if (e instanceof InputError && /ENOENT/.test(e.received)) continue; // released meanwhile
      throw e;
    }
    const holder = parseHolder(current);
    if (holder === null) {
      // Created but not yet written: give the holder a moment.
      if (attempt < ATTEMPTS - 1) {
        pause(PAUSE_MS);
        continue;
      }
      throw new OutputError(
        dir,
        'output folder',
        `a folder no other sweep or merge is writing (its lock file ${path} holds no owner; remove it if no sweep or merge is running)`,
        `the lock file holding ${JSON.stringify(current.slice(0, 60))}`,
      );
    }
    if (holder.host !== me.host || alive(holder.pid))
      throw new OutputError(
        dir,
        'output folder',
        `a folder no other sweep or merge is writing (wait for it to finish${holder.host !== me.host ? `; if it is not running on ${holder.host}, remove ${path}` : ''})`,
        `one locked: ${describeHolder(holder)}`,
      );
    if (takeOver(path, current)) tookOverFrom = holder;
  }
  throw new OutputError(dir, 'output folder', 'a lock that can be taken', `a lock changing hands more than ${ATTEMPTS} times`);
}

/** Creates the lock file with its content; false when it exists. */
function create(path: string, text: string): boolean {
  let fd: number;
  try {
    fd = openSync(path, 'wx', 0o644);
  } catch (e) {
    if (isSystemError(e) && e.code === 'EEXIST') return false;
    throw outputFailure(e, path, 'lock file', 'a file that can be created in the output folder');
  }
  try {
    const bytes = Buffer.from(text);
    let at = 0;
    while (at < bytes.length) at += writeSync(fd, bytes, at, bytes.length - at);
  } catch (e) {
    closeSync(fd);
    rmSync(path, { force: true });
    throw outputFailure(e, path, 'lock file', 'a file that can be written in the output folder');
  }
  closeSync(fd);
  return true;
}

/**
 * Removes a stale lock, but only if it still holds `stale`: it is first
 * moved to a name of this process's (atomic), then checked; a lock taken
 * meanwhile by another run is put back.
 */
function takeOver(path: string, stale: string): boolean {
  const mine = `${path}.${process.pid}.stale`;
  try {
    renameSync(path, mine);
  } catch (e) {
    if (isSystemError(e) && e.code === 'ENOENT') return false;
    throw outputFailure(e, path, 'lock file', 'a stale lock that can be removed');
  }
  let moved = '';
  try {
    moved = readInputText(mine, 'lock file');
  } catch {
    // Unreadable: treat as stale.
  }
  if (moved !== stale && moved !== '') {
    // Another run's fresh lock: restore it unless a third one exists by now.
    if (!existsSync(path)) renameSync(mine, path);
    else rmSync(mine, { force: true });
    return false;
  }
  rmSync(mine, { force: true });
  return true;
}
