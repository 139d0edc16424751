import { createHash } from 'node:crypto';
import {
  cpSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  renameSync,
  rmSync,
  statSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative } from 'node:path';
import { tableFromIPC } from 'apache-arrow';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RESULT_COLUMNS } from '../../src/sweep/result-row.js';
import { runBuilt, runMain } from '../support/run-cli.js';
import { tempDir } from '../support/temp.js';

// The sweep runs its analyses on worker threads, whose entry is the built
// JavaScript: these tests run the built command in a child process (the test
// command builds first). Four captures of 8192 symbols at 2 Sa/symbol: the
// analysis needs about 6000 symbols after its 2048-symbol lead-in, and four
// give two per worker with --jobs 2 while each run stays near a second.
const SCENARIO = {
  name: 'sweep-test',
  base: { symbolRate: 32e9, symbols: 8192, samplesPerSymbol: 2, rollOff: 0.1, modulation: 'qpsk' },
  captures: [
    { name: 'osnr-a', seed: 21, channel: { esN0Db: 10 } },
    { name: 'osnr-b', seed: 22, channel: { esN0Db: 12 } },
    { name: 'osnr-c', seed: 23, modulation: '16qam', channel: { esN0Db: 18 } },
    { name: 'osnr-d', seed: 24, channel: { esN0Db: 14, freqOffsetHz: 3e8 } },
  ],
};

/** Every file under a folder with the SHA-256 of its bytes and its modification time. */
function snapshot(dir: string): Record<string, string> {
  const out: Record<string, string> = {};
  const walk = (d: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else out[relative(dir, p)] = `${createHash('sha256').update(readFileSync(p)).digest('hex')} ${statSync(p).mtimeMs}`;
    }
  };
  walk(dir);
  return out;
}

const counts = (stdout: string) => /analysed (\d+), skipped (\d+), failed (\d+)/.exec(stdout)?.slice(1).map(Number);
const journalLines = (out: string) =>
  existsSync(join(out, 'journal.jsonl'))
    ? readFileSync(join(out, 'journal.jsonl'), 'utf8')
        .split('\n')
        .filter((l) => l.endsWith('}'))
    : [];

let captures: string;
let twoWorkers: { rows: Record<string, unknown>[] };
let reference: { csv: string; stdout: string; out: string };

let work: string;
afterAll(() => rmSync(work, { recursive: true, force: true }));
beforeAll(async () => {
  // Shared by the tests (tempDir's folders are removed after each test).
  work = mkdtempSync(join(tmpdir(), 'intradyne-sweep-test-'));
  writeFileSync(join(work, 'scenario.json'), JSON.stringify(SCENARIO));
  captures = join(work, 'captures');
  // Three in a subfolder, one at the top: the sweep walks subfolders.
  expect((await runMain(['simulate', join(work, 'scenario.json'), '--out', join(captures, 'run-1')])).code).toBe(0);
  for (const f of readdirSync(join(captures, 'run-1')).filter((f) => f.startsWith('osnr-c')))
    renameSync(join(captures, 'run-1', f), join(captures, f));
  const out = join(work, 'one');
  const r = await runBuilt(['sweep', captures, '--jobs', '1', '--out', out]);
  expect(r.code, r.stderr).toBe(0);
  reference = { csv: readFileSync(join(out, 'results.csv'), 'utf8'), stdout: r.stdout, out };
});

describe('intradyne sweep', () => {
  it('writes one row per capture, in sorted order, the same with 1 or 2 workers, and leaves the input alone', async () => {
    expect(counts(reference.stdout)).toEqual([4, 0, 0]);
    const before = snapshot(captures);
    const out = join(tempDir(), 'two');
    const r = await runBuilt(['sweep', captures, '--jobs', '2', '--out', out, '--json']);
    expect(r.code, r.stderr).toBe(0);
    expect(readFileSync(join(out, 'results.csv'), 'utf8')).toBe(reference.csv);
    const lines = reference.csv.trimEnd().split('\n');
    expect(lines[0]).toBe(RESULT_COLUMNS.join(','));
    expect(lines.slice(1).map((l) => l.split(',')[0])).toEqual([
      'osnr-c.csv',
      'run-1/osnr-a.csv',
      'run-1/osnr-b.csv',
      'run-1/osnr-d.csv',
    ]);
    const report = JSON.parse(r.stdout);
    twoWorkers = report;
    expect(report).toMatchObject({ captures: 4, analysed: 4, skipped: 0, failed: 0 });
    // The Arrow table holds the same rows and columns.
    const table = tableFromIPC(readFileSync(join(out, 'results.arrow')));
    expect(table.numRows).toBe(4);
    expect(table.schema.fields.map((f) => f.name)).toEqual([...RESULT_COLUMNS]);
    expect(Array.from(table.getChild('capture')!.toArray())).toEqual(report.rows.map((row: { capture: string }) => row.capture));
    expect(Array.from(table.getChild('ber')!.toArray())).toEqual(report.rows.map((row: { ber: number }) => row.ber));
    // The progress bar and its ETA went to stderr, never to stdout.
    expect(r.stderr).toMatch(/\[#+\] 4\/4 100 % ETA 0 s/);
    expect(r.stdout).not.toMatch(/ETA/);
    expect(snapshot(captures)).toEqual(before);
  });

  it('writes the report of the final rows with --report, also when every row is reused', async () => {
    const report = join(tempDir(), 'sweep.html');
    const r = await runBuilt(['sweep', captures, '--out', reference.out, '--report', report]);
    expect(r.code, r.stderr).toBe(0);
    expect(counts(r.stdout)).toEqual([0, 4, 0]);
    const html = readFileSync(report, 'utf8');
    // One error bar per capture, and the four rows in the table.
    expect(html.match(/class="error-bar"/g)).toHaveLength(4);
    for (const key of ['osnr-c.csv', 'run-1/osnr-a.csv', 'run-1/osnr-b.csv', 'run-1/osnr-d.csv']) expect(html).toContain(key);
    expect(readFileSync(join(reference.out, 'results.csv'), 'utf8')).toBe(reference.csv);
  });

  it('gives each capture the figures that analyze gives it', async () => {
    // The rows of the --jobs 2 sweep above.
    expect(twoWorkers.rows).toHaveLength(4);
    for (const row of twoWorkers.rows as { capture: string; input_sha256: string; pipeline_sha256: string }[]) {
      const a = JSON.parse((await runMain(['analyze', join(captures, row.capture), '--json'])).stdout);
      expect(row).toMatchObject({
        ok: true,
        modulation: a.modulation,
        ber: a.ber,
        ber_ci95_lo: a.berCi95[0],
        ber_ci95_hi: a.berCi95[1],
        bit_errors: a.bitErrors,
        bits: a.bits,
        snr_db: a.snrDb,
        gmi: a.gmi,
        x_snr_db: a.perPol.x.snrDb,
        y_gmi: a.perPol.y.gmi,
        cycle_slips: a.cycleSlips,
        samples_sha256: a.record.inputSha256,
      });
      expect(row.input_sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(row.pipeline_sha256).toMatch(/^[0-9a-f]{64}$/);
    }
  });

  it('resumes from stored rows: a re-run analyses only the missing captures and gives the same table', async () => {
    // Interrupted after two rows: a journal holding the first two rows of a complete run.
    const full = reference.out;
    const partial = join(tempDir(), 'partial');
    mkdirSync(partial);
    const stored = journalLines(full);
    expect(stored).toHaveLength(4);
    // A torn third line, as a kill in mid-write leaves it: ignored, its capture redone.
    writeFileSync(join(partial, 'journal.jsonl'), `${stored[0]}\n${stored[1]}\n${stored[2].slice(0, 100)}`);
    const r = await runBuilt(['sweep', captures, '--jobs', '2', '--out', partial]);
    expect(r.code, r.stderr).toBe(0);
    expect(counts(r.stdout)).toEqual([2, 2, 0]);
    expect(readFileSync(join(partial, 'results.csv'), 'utf8')).toBe(reference.csv);
    // A second re-run redoes nothing.
    const again = await runBuilt(['sweep', captures, '--out', partial]);
    expect(counts(again.stdout)).toEqual([0, 4, 0]);
    expect(readFileSync(join(partial, 'results.csv'), 'utf8')).toBe(reference.csv);
    // Other analysis settings make another pipeline: everything is analysed again.
    const other = await runBuilt(['sweep', captures, '--jobs', '2', '--out', partial, '--skip', '1024']);
    expect(counts(other.stdout)).toEqual([4, 0, 0]);
  });

  it('resumes after being killed part-way', async () => {
    const out = join(tempDir(), 'killed');
    const first = await runBuilt(['sweep', captures, '--jobs', '1', '--out', out], (kill) => {
      const poll = setInterval(() => {
        if (journalLines(out).length >= 1) {
          clearInterval(poll);
          kill();
        }
      }, 5);
    });
    const done = journalLines(out).length;
    // Killed after storing at least one row (or, on a very fast machine, after finishing).
    expect(done).toBeGreaterThanOrEqual(1);
    if (done < 4) expect(first.signal).toBe('SIGKILL');
    const r = await runBuilt(['sweep', captures, '--jobs', '2', '--out', out]);
    expect(r.code, r.stderr).toBe(0);
    expect(counts(r.stdout)).toEqual([4 - done, done, 0]);
    expect(readFileSync(join(out, 'results.csv'), 'utf8')).toBe(reference.csv);
  });

  it('records a capture that cannot be read as a row with check input, finishes the others and exits 1', async () => {
    const copy = join(tempDir(), 'copy');
    cpSync(captures, copy, { recursive: true });
    // The stored rows of the complete sweep: same keys, same files, so all would be skipped.
    const out = join(tempDir(), 'broken');
    cpSync(reference.out, out, { recursive: true });
    writeFileSync(join(copy, 'run-1', 'osnr-b.json'), '{ "sampleRate": 64e9,\n  "symbolRate": -1 }');
    const r = await runBuilt(['sweep', copy, '--out', out, '--json']);
    expect(r.code).toBe(1);
    const report = JSON.parse(r.stdout);
    // Only the changed capture is analysed again (its input hash changed).
    expect(report).toMatchObject({ captures: 4, analysed: 1, skipped: 3, failed: 1 });
    const bad = report.rows.find((row: { capture: string }) => row.capture === 'run-1/osnr-b.csv');
    expect(bad).toMatchObject({ ok: false, failure_check: 'input', ber: null });
    expect(bad.failure_reason).toMatch(/osnr-b\.json:2:17: field 'symbolRate'/);
    const csv = readFileSync(join(out, 'results.csv'), 'utf8').trimEnd().split('\n');
    expect(csv).toHaveLength(5);
  });

  it('sweeps a manifest in its order and reports its mistakes with their line', async () => {
    const manifest = join(captures, '..', 'lab.txt');
    writeFileSync(manifest, '# two captures, in this order\n\ncaptures/run-1/osnr-d.json\n  captures/osnr-c.csv  \n');
    const out = join(tempDir(), 'manifest');
    const r = await runBuilt(['sweep', manifest, '--out', out, '--json']);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout).rows.map((row: { capture: string }) => row.capture)).toEqual([
      'captures/run-1/osnr-d.json',
      'captures/osnr-c.csv',
    ]);
    writeFileSync(manifest, 'captures/osnr-c.csv\n# again\ncaptures/osnr-c.csv\n');
    const dup = await runBuilt(['sweep', manifest, '--out', out]);
    expect(dup.code).toBe(2);
    expect(dup.stderr).toMatch(
      /lab\.txt:3:1: capture: expected each capture listed once, received "captures\/osnr-c\.csv", already on line 1/,
    );
  });

  it('exits 2 on bad usage: no input, an empty folder, an output inside the input, a bad --jobs', async () => {
    expect((await runMain(['sweep'])).code).toBe(2);
    expect((await runMain(['sweep', '--help'])).stdout).toMatch(/journal\.jsonl/);
    const empty = await runMain(['sweep', tempDir()]);
    expect(empty.code).toBe(2);
    expect(empty.stderr).toMatch(/expected a folder with at least one capture/);
    const inside = await runMain(['sweep', captures, '--out', join(captures, 'results')]);
    expect(inside.code).toBe(2);
    expect(inside.stderr).toMatch(/expected a folder outside the swept folder/);
    expect((await runMain(['sweep', captures, '--jobs', '0'])).stderr).toMatch(/--jobs expected a positive/);
  });
});
