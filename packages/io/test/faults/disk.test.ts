import { cpSync, existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { expectCompleteOutputs, expectTypedOutcome, snapshot } from '../support/outputs.js';
import { runBuilt, runBuiltWithin } from '../support/run-cli.js';
import { sweptTinyCaptures } from '../support/tiny-captures.js';
import { blockSize, fillLeaving, mountTmpfs, remount, unmount } from '../support/tmpfs.js';

// Disk-full and read-only faults on a small tmpfs of our own (the suite
// needs root, as CI has: it fails, never skips, when it cannot mount). The
// free space is set with a filler file to fall between two of a command's
// writes, so that each write of the atomic writer meets a full disk in
// turn: a command then exits 2 naming the file and ENOSPC, leaves no
// temporary file and no output under its final name unless it is complete,
// and keeps what it had written before (earlier tables, journal rows).

/** A tmpfs large enough for any one case here: the tiny captures' outputs are a few hundred kB. */
const TMPFS_BYTES = 8 << 20;
const DEADLINE_MS = 60_000;

let base: string;
let inputs: string;
let referenceSweep: string;
/** Sizes of what analyze --out and --report write for capture a. */
let sizes: { symbols: number; json: number; report: number };
const mounted: string[] = [];

beforeAll(async () => {
  ({ base, captures: inputs, referenceSweep } = await sweptTinyCaptures('intradyne-disk-'));
  const out = join(base, 'reference-analysis');
  const a = await runBuilt(['analyze', join(inputs, 'a.csv'), '--out', out, '--report', join(base, 'a.html')]);
  expect(a.code, a.stderr).toBe(0);
  sizes = {
    symbols: statSync(join(out, 'a.symbols.arrow')).size,
    json: statSync(join(out, 'a.analysis.json')).size,
    report: statSync(join(base, 'a.html')).size,
  };
});

afterEach(() => {
  for (const m of mounted.splice(0)) unmount(m);
});
afterAll(() => {
  for (const m of mounted.splice(0)) unmount(m);
  rmSync(base, { recursive: true, force: true });
});

/** A fresh tmpfs; unmounted after the test. */
function tmpfs(name: string): string {
  const dir = join(base, name);
  mountTmpfs(dir, TMPFS_BYTES);
  mounted.push(dir);
  return dir;
}

/** Whole blocks of the tmpfs needed for `bytes`. */
const blocks = (dir: string, bytes: number) => Math.ceil(bytes / blockSize(dir));

/** Checks the promises of a failed run: exit 2 naming ENOSPC or EROFS, no stack trace, inputs untouched, outputs complete. */
async function failsCleanly(argv: string[], reason: RegExp, outputs: string): Promise<string> {
  const before = snapshot(inputs);
  const r = await runBuiltWithin(argv, DEADLINE_MS);
  expect(r.hung).toBe(false);
  expectTypedOutcome(r);
  expect(r.code, r.stderr).toBe(2);
  expect(r.stderr).toMatch(reason);
  expect(snapshot(inputs)).toEqual(before);
  expectCompleteOutputs(outputs, (p) => p.endsWith('filler.bin'));
  return r.stderr;
}

describe('a full disk', () => {
  it('analyze --out: no room for the symbols, nothing written', async () => {
    const disk = tmpfs('full-symbols');
    fillLeaving(disk, blockSize(disk));
    await failsCleanly(
      ['analyze', join(inputs, 'a.csv'), '--out', join(disk, 'out')],
      /a\.symbols\.arrow: output file: expected a path in an existing, writable folder with room for the file, received ENOSPC \(no space left on the device\)/,
      disk,
    );
    expect(readdirSync(join(disk, 'out'))).toEqual([]);
  });

  it('analyze --out: room for the symbols but not the analysis: neither is put in place', async () => {
    const disk = tmpfs('full-json');
    // The symbols staged whole, the analysis cut short: it used to be left truncated under its final name.
    fillLeaving(disk, (blocks(disk, sizes.symbols) + blocks(disk, sizes.json) - 1) * blockSize(disk));
    await failsCleanly(
      ['analyze', join(inputs, 'a.csv'), '--out', join(disk, 'out')],
      /a\.analysis\.json: output file: .*received ENOSPC/,
      disk,
    );
    expect(readdirSync(join(disk, 'out'))).toEqual([]);
  });

  it('analyze --report: no room for the page, nothing written', async () => {
    const disk = tmpfs('full-report');
    fillLeaving(disk, blocks(disk, sizes.report) * blockSize(disk) - blockSize(disk));
    await failsCleanly(
      ['analyze', join(inputs, 'a.csv'), '--report', join(disk, 'a.html')],
      /a\.html: report: .*received ENOSPC/,
      disk,
    );
    expect(readdirSync(disk)).toEqual(['filler.bin']);
  });

  it("a sweep's tables: room for results.csv but not results.arrow: the earlier pair stays as it was", async () => {
    const disk = tmpfs('full-tables');
    const out = join(disk, 'out');
    cpSync(referenceSweep, out, { recursive: true });
    const before = snapshot(out);
    const csv = statSync(join(referenceSweep, 'results.csv')).size;
    const arrow = statSync(join(referenceSweep, 'results.arrow')).size;
    // One block for the lock, the new CSV whole, the new Arrow table one block short.
    fillLeaving(disk, (1 + blocks(disk, csv) + blocks(disk, arrow) - 1) * blockSize(disk));
    await failsCleanly(['sweep', inputs, '--jobs', '1', '--out', out], /results\.arrow: results table: .*received ENOSPC/, disk);
    expect(snapshot(out)).toEqual(before);
  });

  it("a sweep's journal: a row that does not fit stops the sweep; the rows before it are kept and the re-run goes on", async () => {
    const disk = tmpfs('full-journal');
    const out = join(disk, 'out');
    mkdirSync(out);
    const stored = readFileSync(join(referenceSweep, 'journal.jsonl'), 'utf8').split('\n');
    // Capture a's row, then blank lines (which a journal may hold) up to 100 bytes short of one block:
    // b's row then needs a second block, and the lock takes the only one left.
    const block = blockSize(disk);
    const head = `${stored[0]}\n`;
    writeFileSync(join(out, 'journal.jsonl'), head + '\n'.repeat(block - 100 - head.length));
    fillLeaving(disk, block);
    await failsCleanly(['sweep', inputs, '--jobs', '1', '--out', out], /journal\.jsonl: sweep journal: .*received ENOSPC/, disk);
    expect(readdirSync(out)).not.toContain('sweep.lock');
    expect(readFileSync(join(out, 'journal.jsonl'), 'utf8').startsWith(head)).toBe(true);
    // With room again, the torn row is set aside and the sweep finishes with the tables of a whole run.
    rmSync(join(disk, 'filler.bin'));
    const again = await runBuilt(['sweep', inputs, '--jobs', '1', '--out', out]);
    expect(again.code, again.stderr).toBe(0);
    expect(again.stderr).toMatch(/set aside to journal-set-aside\.jsonl: an incomplete last line/);
    expect(again.stdout).toMatch(/analysed 2, skipped 1/);
    for (const f of ['results.csv', 'results.arrow'])
      expect(readFileSync(join(out, f)).equals(readFileSync(join(referenceSweep, f))), f).toBe(true);
  });

  it('no room at all: the lock cannot be written, and is not left behind', async () => {
    const disk = tmpfs('full-lock');
    fillLeaving(disk, 0);
    mkdirSync(join(disk, 'out'));
    await failsCleanly(
      ['sweep', inputs, '--jobs', '1', '--out', join(disk, 'out')],
      /sweep\.lock: lock file: expected a file that can be written in the output folder, received ENOSPC/,
      disk,
    );
    expect(readdirSync(join(disk, 'out'))).toEqual([]);
  });

  it('simulate: the capture that does not fit is not written at all; the ones before are whole', async () => {
    const disk = tmpfs('full-simulate');
    const first = join(base, 'sim-sizes');
    const r = await runBuilt(['simulate', 'qpsk-b2b', '--symbols', '2048', '--out', first]);
    expect(r.code, r.stderr).toBe(0);
    const one = ['esn0-8db.csv', 'esn0-8db-reference.csv', 'esn0-8db.json'].reduce(
      (n, f) => n + blocks(disk, statSync(join(first, f)).size),
      0,
    );
    fillLeaving(disk, (one + 2) * blockSize(disk));
    await failsCleanly(['simulate', 'qpsk-b2b', '--symbols', '2048', '--out', join(disk, 'out')], /received ENOSPC/, disk);
    expect(readdirSync(join(disk, 'out')).sort()).toEqual(['esn0-8db-reference.csv', 'esn0-8db.csv', 'esn0-8db.json']);
    for (const f of readdirSync(join(disk, 'out')))
      expect(readFileSync(join(disk, 'out', f)).equals(readFileSync(join(first, f))), f).toBe(true);
  });
});

describe('a read-only file system', () => {
  it('analyze --out, analyze --report, sweep, merge and simulate each exit 2 naming it, changing nothing', async () => {
    const disk = tmpfs('read-only');
    // A finished shard to merge, written before the file system turns read-only.
    const shard = await runBuilt(['sweep', inputs, '--jobs', '1', '--shard', '0/1', '--out', join(disk, 'sharded')]);
    expect(shard.code, shard.stderr).toBe(0);
    mkdirSync(join(disk, 'existing'));
    remount(disk, 'ro');
    const before = snapshot(disk);
    const erofs = /received EROFS \(a read-only file system\)/;
    await failsCleanly(['analyze', join(inputs, 'a.csv'), '--out', join(disk, 'out')], erofs, disk);
    await failsCleanly(['analyze', join(inputs, 'a.csv'), '--out', join(disk, 'existing')], erofs, disk);
    await failsCleanly(['analyze', join(inputs, 'a.csv'), '--report', join(disk, 'a.html')], erofs, disk);
    await failsCleanly(['sweep', inputs, '--jobs', '1', '--out', join(disk, 'sweep')], erofs, disk);
    await failsCleanly(['merge', join(disk, 'sharded')], erofs, disk);
    await failsCleanly(['simulate', 'qpsk-b2b', '--symbols', '256', '--out', join(disk, 'sim')], erofs, disk);
    expect(snapshot(disk)).toEqual(before);
    expect(existsSync(join(disk, 'sharded', 'results.csv'))).toBe(false);
  });
});
