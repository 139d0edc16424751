import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { tableFromIPC } from 'apache-arrow';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RESULT_COLUMNS } from '../../src/sweep/result-row.js';
import { shardOf } from '../../src/sweep/shard.js';
import { type ShardRecord, writeShardRecord } from '../../src/sweep/shard-record.js';
import { runBuilt, runMain } from '../support/run-cli.js';
import { simulateSixteenCaptures } from '../support/sharded-captures.js';
import { tempDir } from '../support/temp.js';

// Sharding without a scheduler: four processes started here, each with
// --shard K/4, then merge, against one sweep of the same sixteen captures.
// The sweep runs on worker threads from the built command (built first by
// the test command), as in sweep.test.ts.

const SLURM_VARIABLES = ['ID', 'COUNT', 'MIN', 'MAX', 'STEP'].map((v) => `SLURM_ARRAY_TASK_${v}`);
/** No Slurm array variable in a child's environment, even when the tests run inside a Slurm job. */
const NO_SLURM = Object.fromEntries(SLURM_VARIABLES.map((v) => [v, undefined]));

let work: string;
let captures: string;
let single: { csv: Buffer; arrow: Buffer };
let sharded: string;

const counts = (stdout: string) => /analysed (\d+), skipped (\d+), failed (\d+)/.exec(stdout)?.slice(1).map(Number);
const readRecord = (dir: string, k: number): ShardRecord =>
  JSON.parse(readFileSync(join(dir, `shard-${k}-of-4`, 'shard.json'), 'utf8'));
/** Writes a changed record as a shard would (with its rows' fingerprint), to test the merge's checks across shards. */
const writeRecord = (dir: string, k: number, r: ShardRecord) => writeShardRecord(join(dir, `shard-${k}-of-4`), r);
/** A copy of the four finished shards, to break. */
const shardsCopy = () => {
  const dir = join(tempDir(), 'shards');
  cpSync(sharded, dir, { recursive: true });
  rmSync(join(dir, 'results.csv'));
  rmSync(join(dir, 'results.arrow'));
  return dir;
};
const merge = (dir: string) => runMain(['merge', dir]);

afterAll(() => rmSync(work, { recursive: true, force: true }));
beforeAll(async () => {
  work = mkdtempSync(join(tmpdir(), 'intradyne-merge-test-'));
  captures = await simulateSixteenCaptures(work);
  const one = join(work, 'one');
  const r = await runBuilt(['sweep', captures, '--jobs', '2', '--out', one]);
  expect(r.code, r.stderr).toBe(0);
  single = { csv: readFileSync(join(one, 'results.csv')), arrow: readFileSync(join(one, 'results.arrow')) };
  sharded = join(work, 'sharded');
  // The four shards at once, as four array tasks would run them.
  const shards = await Promise.all(
    [0, 1, 2, 3].map((k) =>
      runBuilt(['sweep', captures, '--jobs', '1', '--out', sharded, '--shard', `${k}/4`], undefined, NO_SLURM),
    ),
  );
  for (const s of shards) expect(s.code, s.stderr).toBe(0);
});

describe('sweep --shard K/N and merge', () => {
  it('gives, merged, the bytes one sweep gives (CSV and Arrow), each shard holding its hash share', async () => {
    const r = await runBuilt(['merge', sharded, '--json']);
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ shards: 4, captures: 16, failed: 0 });
    expect(readFileSync(join(sharded, 'results.csv'))).toEqual(single.csv);
    expect(readFileSync(join(sharded, 'results.arrow'))).toEqual(single.arrow);
    let total = 0;
    for (const k of [0, 1, 2, 3]) {
      const record = readRecord(sharded, k);
      expect(record).toMatchObject({ shard: k, shards: 4, input: { kind: 'folder', captures: 16 } });
      for (const { row } of record.rows) expect(shardOf(row.capture as string, 4)).toBe(k);
      // The shard's own table holds its rows, header first.
      const csv = readFileSync(join(sharded, `shard-${k}-of-4`, 'results.csv'), 'utf8')
        .trimEnd()
        .split('\n');
      expect(csv).toHaveLength(record.rows.length + 1);
      total += record.rows.length;
    }
    expect(total).toBe(16);
  });

  it('writes with --report the page one sweep writes: one error bar per capture, every capture in its table', async () => {
    const dir = shardsCopy();
    const page = join(tempDir(), 'merged.html');
    const r = await runMain(['merge', dir, '--report', page]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain(`report ${page}`);
    const html = readFileSync(page, 'utf8');
    expect(html.match(/class="error-bar"/g)).toHaveLength(16);
    for (const line of single.csv.toString('utf8').trimEnd().split('\n').slice(1))
      expect(html).toContain(line.slice(0, line.indexOf(',')));
    // The report never replaces a shard's record.
    const record = join(dir, 'shard-0-of-4', 'shard.json');
    const before = readFileSync(record, 'utf8');
    expect((await runMain(['merge', dir, '--report', record])).code).toBe(2);
    expect(readFileSync(record, 'utf8')).toBe(before);
  });

  it('re-runs a shard from its journal: nothing analysed again, the same record; --shard auto finds the same shard', async () => {
    const dir = shardsCopy();
    const before = readFileSync(join(dir, 'shard-2-of-4', 'shard.json'), 'utf8');
    const done = readRecord(dir, 2).rows.length;
    // Task 3 of --array=1-4 is shard 2/4.
    const env = { SLURM_ARRAY_TASK_ID: '3', SLURM_ARRAY_TASK_MIN: '1', SLURM_ARRAY_TASK_MAX: '4', SLURM_ARRAY_TASK_COUNT: '4' };
    const r = await runBuilt(['sweep', captures, '--out', dir, '--shard', 'auto', '--jobs', '1'], undefined, {
      ...NO_SLURM,
      ...env,
    });
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain('shard 2/4:');
    expect(counts(r.stdout)).toEqual([0, done, 0]);
    expect(readFileSync(join(dir, 'shard-2-of-4', 'shard.json'), 'utf8')).toBe(before);
  });

  it('keeps the order of a manifest: two shards of a manifest merge into what one sweep of it gives', async () => {
    const manifest = join(captures, '..', 'lab.txt');
    // Four captures listed out of sorted order, one by its descriptor. Their keys hash to
    // shards 0, 1, 0, 1 (sha256sum), so the merge must interleave the two shards.
    writeFileSync(
      manifest,
      '# chosen runs\ncaptures/osnr-b/run-12.csv\ncaptures/osnr-a/run-03.json\ncaptures/osnr-b/run-09.csv\ncaptures/osnr-a/run-00.csv\n',
    );
    const one = join(tempDir(), 'one');
    const r = await runBuilt(['sweep', manifest, '--jobs', '2', '--out', one]);
    expect(r.code, r.stderr).toBe(0);
    const dir = join(tempDir(), 'two');
    for (const k of [0, 1]) {
      const s = await runBuilt(['sweep', manifest, '--jobs', '1', '--out', dir, '--shard', `${k}/2`], undefined, NO_SLURM);
      expect(s.code, s.stderr).toBe(0);
    }
    const m = await runMain(['merge', dir]);
    expect(m.code, m.stderr).toBe(0);
    expect(m.stdout).toContain('merged 2 shards: 4 captures, failed 0');
    expect(readFileSync(join(dir, 'results.csv'), 'utf8')).toBe(readFileSync(join(one, 'results.csv'), 'utf8'));
    expect(readFileSync(join(dir, 'results.arrow'))).toEqual(readFileSync(join(one, 'results.arrow')));
    const keys = readFileSync(join(dir, 'results.csv'), 'utf8')
      .trimEnd()
      .split('\n')
      .slice(1)
      .map((l) => l.split(',')[0]);
    expect(keys).toEqual([
      'captures/osnr-b/run-12.csv',
      'captures/osnr-a/run-03.json',
      'captures/osnr-b/run-09.csv',
      'captures/osnr-a/run-00.csv',
    ]);
  });

  it('refuses a missing shard, naming it, and one that did not finish', async () => {
    const dir = shardsCopy();
    rmSync(join(dir, 'shard-2-of-4'), { recursive: true });
    let r = await merge(dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('shards: expected all 4 shards 0/4 to 3/4, received missing 2/4');
    rmSync(join(dir, 'shard-1-of-4', 'shard.json'));
    r = await merge(dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('missing 1/4 (shard-1-of-4 has no shard.json: it did not finish), 2/4');
    expect(existsSync(join(dir, 'results.csv'))).toBe(false);
  });

  it('refuses a shard present twice', async () => {
    const dir = shardsCopy();
    cpSync(join(dir, 'shard-1-of-4'), join(dir, 'shard-1-of-4 copy'), { recursive: true });
    const r = await merge(dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('shard 1/4: expected one folder holding it, received two: shard-1-of-4 and shard-1-of-4 copy');
  });

  it('refuses shards run with other settings, another library version, over other inputs or of another split', async () => {
    const dir = shardsCopy();
    // Shard 1 run again with another analysis setting.
    const other = await runBuilt(
      ['sweep', captures, '--jobs', '1', '--out', dir, '--shard', '1/4', '--skip', '1024'],
      undefined,
      NO_SLURM,
    );
    expect(other.code, other.stderr).toBe(0);
    let r = await merge(dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /shard-1-of-4\/shard\.json: analysis settings: expected the settings of shard 0\/4 in shard-0-of-4: .*, received .*"skipSymbols":1024/,
    );

    const again = shardsCopy();
    writeRecord(again, 1, { ...readRecord(again, 1), version: '0.0.9' });
    r = await merge(again);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(
      /shard-1-of-4\/shard\.json: library version: expected 0\.1\.0, as shard 0\/4 in shard-0-of-4, received 0\.0\.9/,
    );

    const record = readRecord(again, 1);
    writeRecord(again, 1, { ...record, version: readRecord(again, 0).version, input: { ...record.input, captures: 15 } });
    r = await merge(again);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/sweep input: expected the captures shard 0\/4 in shard-0-of-4 was split from \(16 of them\)/);

    // A shard of another split (N = 16) left beside the first. None of the sixteen
    // keys hashes to 2 modulo 16, so it is also an empty shard: header-only tables.
    const mixed = shardsCopy();
    const empty = await runBuilt(['sweep', captures, '--jobs', '1', '--out', mixed, '--shard', '2/16'], undefined, NO_SLURM);
    expect(empty.code, empty.stderr).toBe(0);
    expect(counts(empty.stdout)).toEqual([0, 0, 0]);
    expect(readFileSync(join(mixed, 'shard-2-of-16', 'results.csv'), 'utf8')).toBe(`${RESULT_COLUMNS.join(',')}\n`);
    const table = tableFromIPC(readFileSync(join(mixed, 'shard-2-of-16', 'results.arrow')));
    expect([table.numRows, table.schema.fields.map((f) => f.name)]).toEqual([0, [...RESULT_COLUMNS]]);
    r = await merge(mixed);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(
      'shards: expected shards of one split (all N = 4, as shard 0/4 in shard-0-of-4); remove the folders of the other split, received shard 2/16 in shard-2-of-16',
    );
  });

  it('refuses a row in a shard it does not hash to, a place taken twice, and a results folder without shards', async () => {
    const dir = shardsCopy();
    const from = readRecord(dir, 0);
    const to = readRecord(dir, 1);
    writeRecord(dir, 1, { ...to, rows: [...to.rows, from.rows[0]] });
    let r = await merge(dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`row ${from.rows[0].row.capture}: expected a capture of shard 1/4, received one of shard 0/4`);

    writeRecord(dir, 1, { ...to, rows: [...to.rows, { position: from.rows[0].position, row: to.rows[0].row }] });
    r = await merge(dir);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/row .*: expected a position of its own, received \d+, the place of /);

    r = await merge(tempDir());
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('shards: expected subfolders shard-K-of-N holding a shard.json');
    expect((await runMain(['merge'])).code).toBe(2);
    expect((await runMain(['merge', '--help'])).stdout).toContain('intradyne merge RESULT_DIR');
  });
});

describe('sweep --emit-slurm', () => {
  it('writes a job-array script to review: array size, CPUs, the shard command, the merge after it', async () => {
    const dir = tempDir();
    const file = join(dir, 'lab.slurm');
    const out = join(dir, 'results');
    const r = await runMain([
      'sweep',
      captures,
      '--out',
      out,
      '--emit-slurm',
      file,
      '--tasks',
      '4',
      '--jobs',
      '2',
      '--skip',
      '1024',
    ]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain('16 captures in 4 array tasks');
    const text = readFileSync(file, 'utf8');
    expect(text).toMatch(/^#!\/usr\/bin\/env bash\n/);
    expect(text).toContain('#SBATCH --array=0-3\n');
    expect(text).toContain('#SBATCH --cpus-per-task=2\n');
    expect(text).toContain(`#SBATCH --output=${out}/logs/shard-%A_%a.out\n`);
    expect(text).toContain('--dependency="afterany:$array"');
    // The task's shard and CPUs come from Slurm's variables, expanded by bash in the task.
    expect(text).toContain(`--shard "$SLURM_ARRAY_TASK_ID/4" --jobs "$\{SLURM_CPUS_PER_TASK:-1}" --skip 1024\n`);
    expect(text).toContain(`INPUT=${captures}\n`);
    expect(text).not.toContain('--report');
    // bash reads it (syntax only: nothing runs).
    const syntax = spawnSync('bash', ['-n', file], { encoding: 'utf8' });
    expect(syntax.status, syntax.stderr).toBe(0);
    // Nothing was analysed or submitted: the output folder holds only the empty logs folder
    // Slurm's --output needs. The script is never replaced.
    expect(readdirSync(out)).toEqual(['logs']);
    expect(readdirSync(join(out, 'logs'))).toEqual([]);
    // With --report, the merge job writes the page.
    const withPage = join(dir, 'with-page.slurm');
    const page = join(dir, 'lab.html');
    expect(
      (await runMain(['sweep', captures, '--out', out, '--emit-slurm', withPage, '--tasks', '4', '--report', page])).code,
    ).toBe(0);
    expect(readFileSync(withPage, 'utf8')).toContain(`merge "$OUT" --report ${page})`);
    const again = await runMain(['sweep', captures, '--out', out, '--emit-slurm', file, '--tasks', '2']);
    expect(again.code).toBe(2);
    expect(again.stderr).toContain('already exists; refusing to overwrite it');
    expect(readFileSync(file, 'utf8')).toBe(text);
  });

  it('exits 2 when --emit-slurm lacks --tasks, comes with --shard, or --tasks comes alone; --shard auto outside Slurm', async () => {
    const file = join(tempDir(), 'x.slurm');
    const cases: [string[], string][] = [
      [['--emit-slurm', file], '--emit-slurm needs --tasks N'],
      [['--emit-slurm', file, '--tasks', '2', '--shard', '0/2'], 'give no --shard with it'],
      [['--tasks', '2'], '--tasks goes with --emit-slurm FILE'],
      [['--emit-slurm', file, '--tasks', '0'], '--tasks expected a positive number'],
      [['--shard', '2/2'], "--shard expected K/N with 0 ≤ K < N (shards numbered from 0), received '2/2'"],
    ];
    for (const [args, message] of cases) {
      const r = await runMain(['sweep', captures, ...args]);
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr).toContain(message);
    }
    const auto = await runBuilt(['sweep', captures, '--shard', 'auto'], undefined, NO_SLURM);
    expect(auto.code).toBe(2);
    expect(auto.stderr).toContain(
      '--shard auto expected to run as a task of a Slurm job array, but SLURM_ARRAY_TASK_ID is not set',
    );
    expect(existsSync(file)).toBe(false);
  });
});
