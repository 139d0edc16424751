import { execFileSync } from 'node:child_process';
import { mkdirSync, statfsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';

/** Runs mount or umount; a failure throws with the command's own message and what the suite needs. */
function mountCommand(args: readonly string[]): void {
  try {
    execFileSync(args[0], args.slice(1), { stdio: ['ignore', 'ignore', 'pipe'] });
  } catch (e) {
    const stderr = String((e as { stderr?: Buffer }).stderr ?? '').trim();
    throw new Error(
      `the fault suite needs to mount a small tmpfs as root ('${args.join(' ')}' failed: ${stderr || (e as Error).message}); ` +
        'run the tests as root (CI runs .ci/run as root on a fresh machine)',
    );
  }
}

/** Mounts a tmpfs of `bytes` (rounded up to pages by the kernel) on a new folder. */
export function mountTmpfs(dir: string, bytes: number): void {
  mkdirSync(dir, { recursive: true });
  mountCommand(['mount', '-t', 'tmpfs', '-o', `size=${bytes},mode=0755`, 'tmpfs', dir]);
}

/** Changes a mounted tmpfs: its size (`size=…`) or its mode (`ro`, `rw`). */
export function remount(dir: string, option: string): void {
  mountCommand(['mount', '-o', `remount,${option}`, dir]);
}

/** Unmounts, lazily if busy (a test that failed may hold a file open). */
export function unmount(dir: string): void {
  try {
    execFileSync('umount', [dir], { stdio: 'ignore' });
  } catch {
    execFileSync('umount', ['-l', dir], { stdio: 'ignore' });
  }
}

/** Free bytes of the file system holding `dir`. */
export function freeBytes(dir: string): number {
  const s = statfsSync(dir);
  return s.bavail * s.bsize;
}

/** Page size of tmpfs's accounting (its block size). */
export function blockSize(dir: string): number {
  return statfsSync(dir).bsize;
}

/**
 * Fills the file system of `dir` so that `leave` bytes stay free (rounded
 * down to whole blocks), with a filler file in `dir`.
 */
export function fillLeaving(dir: string, leave: number, name = 'filler.bin'): void {
  const block = blockSize(dir);
  const fill = freeBytes(dir) - Math.ceil(leave / block) * block;
  if (fill > 0) writeFileSync(join(dir, name), Buffer.alloc(fill));
}
