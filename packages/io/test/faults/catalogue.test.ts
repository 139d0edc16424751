import { execFileSync, spawn } from 'node:child_process';
import {
  copyFileSync,
  cpSync,
  existsSync,
  linkSync,
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  symlinkSync,
  writeFileSync,
} from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { makeVector, type RecordBatch, Table, tableFromIPC, tableToIPC } from 'apache-arrow';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readCsvCapture } from '../../src/load/csv-capture.js';
import { expectCompleteOutputs, expectTypedOutcome, snapshot } from '../support/outputs.js';
import { BUILT_CLI, type CliRun, runBuilt, runBuiltWithin } from '../support/run-cli.js';
import { sweptTinyCaptures } from '../support/tiny-captures.js';

// The fault catalogue: every kind of bad input and file-system fault found
// against the command, each run through the built command in a child
// process (a case that hangs is killed at its deadline and fails). Every
// case checks the same promises: the expected exit code (0, 1 or 2), no
// stack trace, a typed message naming the place at fault, the inputs
// untouched, no temporary file left, and every output complete. The disk-full
// and read-only cases, which need a tmpfs, are in disk.test.ts.

/** A run longer than this is a hang: the slowest case (a sweep of three tiny captures) takes about 3 s. */
const DEADLINE_MS = 30_000;

interface Case {
  /** What is wrong, in words. */
  readonly name: string;
  /** Prepares `work/in` (inputs) and returns the command's arguments. */
  readonly setup: (work: string) => string[] | Promise<string[]>;
  /** Expected exit code. */
  readonly code: 0 | 1 | 2;
  /** What stderr must say. */
  readonly stderr?: RegExp;
  /** What stdout must say. */
  readonly stdout?: RegExp;
  /** Further checks. */
  readonly after?: (work: string, run: CliRun) => void;
  /** Environment variables for the run. */
  readonly env?: (work: string) => Record<string, string>;
}

let base: string;
let captures: string;
let referenceSweep: string;

beforeAll(async () => {
  // The journal's lines come in the captures' order (a, b, c), which the journal cases edit.
  ({ base, captures, referenceSweep } = await sweptTinyCaptures('intradyne-faults-'));
});
afterAll(() => rmSync(base, { recursive: true, force: true }));

/** `work/in` holding the three tiny captures; returns it. */
function inputs(work: string): string {
  const dir = join(work, 'in');
  cpSync(captures, dir, { recursive: true });
  return dir;
}

/** A descriptor of capture a with some fields changed, written as `name`.json beside a copy of its data. */
function relabel(work: string, name: string, change: Record<string, unknown>): string {
  const dir = inputs(work);
  const d = { ...JSON.parse(readFileSync(join(dir, 'a.json'), 'utf8')), ...change };
  writeFileSync(join(dir, `${name}.json`), JSON.stringify(d, null, 2));
  if (name !== 'a') copyFileSync(join(dir, 'a.csv'), join(dir, `${name}.csv`));
  return join(dir, `${name}.csv`);
}

/** A capture whose data file is `bytes`, with a's descriptor and reference. */
function dataFile(work: string, bytes: Uint8Array | string): string {
  const dir = inputs(work);
  writeFileSync(join(dir, 'x.csv'), bytes);
  copyFileSync(join(dir, 'a.json'), join(dir, 'x.json'));
  return join(dir, 'x.csv');
}

/** The output folder of a sweep holding the reference sweep's journal, damaged by `edit`. */
function damagedJournal(work: string, edit: (lines: string[]) => string): string[] {
  const dir = inputs(work);
  const out = join(work, 'out');
  mkdirSync(out);
  const lines = readFileSync(join(referenceSweep, 'journal.jsonl'), 'utf8').trimEnd().split('\n');
  writeFileSync(join(out, 'journal.jsonl'), edit(lines));
  return ['sweep', dir, '--jobs', '1', '--out', out];
}

/** Edits the row of journal line `i` (0-based). */
const editRow = (lines: string[], i: number, change: (row: Record<string, unknown>) => void): string => {
  const e = JSON.parse(lines[i]);
  change(e.row);
  lines[i] = JSON.stringify(e);
  return `${lines.join('\n')}\n`;
};

/** After a sweep that set lines aside: the tables are the reference sweep's, byte for byte. */
const sameTables = (work: string) => {
  for (const f of ['results.csv', 'results.arrow'])
    expect(readFileSync(join(work, 'out', f)).equals(readFileSync(join(referenceSweep, f))), f).toBe(true);
};

/** Capture a's channels as an Arrow IPC stream of four record batches. */
function arrowStream(): Uint8Array {
  const block = [...readCsvCapture(join(captures, 'a.csv'), { sampleRate: 64e9 })][0];
  const parts: RecordBatch[] = [];
  const n = block.xi.length / 4;
  for (let k = 0; k < 4; k++) {
    const cols = Object.fromEntries(
      (['xi', 'xq', 'yi', 'yq'] as const).map((c) => [c, makeVector(block[c].subarray(k * n, (k + 1) * n))]),
    );
    parts.push(...new Table(cols).batches);
  }
  return tableToIPC(new Table(parts), 'stream');
}

function arrowCapture(work: string, bytes: Uint8Array, ext = '.arrows'): string {
  const dir = inputs(work);
  writeFileSync(join(dir, `s${ext}`), bytes);
  copyFileSync(join(dir, 'a.json'), join(dir, 's.json'));
  return join(dir, `s${ext}`);
}

const mkfifo = (path: string) => execFileSync('mkfifo', [path]);

/** A process id that is no longer running: a child that has exited. */
function deadPid(): number {
  const child = execFileSync(process.execPath, ['-e', 'console.log(process.pid)'], { encoding: 'utf8' });
  return Number(child.trim());
}

const sweepOut = (work: string, extra: string[] = []) => [
  'sweep',
  inputs(work),
  '--jobs',
  '1',
  '--out',
  join(work, 'out'),
  ...extra,
];

const CASES: Record<string, Case[]> = {
  'outputs written whole or not at all': [
    {
      name: 'analyze --out writes the analysis and the symbols, nothing else',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--out', join(w, 'out')],
      code: 0,
      after: (w) => expect(readdirSync(join(w, 'out')).sort()).toEqual(['a.analysis.json', 'a.symbols.arrow']),
    },
    {
      name: '--out names an existing file',
      setup: (w) => {
        writeFileSync(join(w, 'out'), 'keep me');
        return ['analyze', join(inputs(w), 'a.csv'), '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /out: output folder: expected a folder \(created when missing\), received a regular file/,
      after: (w) => expect(readFileSync(join(w, 'out'), 'utf8')).toBe('keep me'),
    },
    {
      name: '--out goes through a file',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--out', join(w, 'in', 'a.csv', 'out')],
      code: 2,
      stderr: /output folder: expected a folder \(created when missing\), received ENOTDIR/,
    },
    {
      name: '--report names a folder',
      setup: (w) => {
        mkdirSync(join(w, 'report.html'));
        return ['analyze', join(inputs(w), 'a.csv'), '--report', join(w, 'report.html')];
      },
      code: 2,
      stderr: /report\.html: report: expected a path for a file, received a folder/,
      after: (w) => expect(readdirSync(join(w, 'report.html'))).toEqual([]),
    },
    {
      name: '--report in a missing folder',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--report', join(w, 'missing', 'r.html')],
      code: 2,
      stderr: /r\.html: report: expected a path in an existing folder \(.*missing\), received ENOENT/,
    },
    {
      name: '--report names the capture itself',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--report', join(w, 'in', 'a.csv')],
      code: 2,
      stderr: /a\.csv: report file: expected a path that is not an input/,
    },
    {
      name: '--report is a hard link to the descriptor',
      setup: (w) => {
        linkSync(join(inputs(w), 'a.json'), join(w, 'same-report'));
        return ['analyze', join(w, 'in', 'a.csv'), '--report', join(w, 'same-report')];
      },
      code: 2,
      stderr: /same-report: report file: expected a path that is not an input/,
    },
    {
      name: 'the analysis file of --out is a folder: neither output is written',
      setup: (w) => {
        mkdirSync(join(w, 'out', 'a.analysis.json'), { recursive: true });
        return ['analyze', join(inputs(w), 'a.csv'), '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /a\.analysis\.json: output file: expected a path for a file, received a folder/,
      after: (w) => expect(readdirSync(join(w, 'out'))).toEqual(['a.analysis.json']),
    },
    {
      name: 'the symbols file of --out is a folder',
      setup: (w) => {
        mkdirSync(join(w, 'out', 'a.symbols.arrow'), { recursive: true });
        return ['analyze', join(inputs(w), 'a.csv'), '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /a\.symbols\.arrow: output file: expected a path for a file, received a folder/,
    },
    {
      name: 'sweep --report names a folder: refused before any analysis',
      setup: (w) => {
        mkdirSync(join(w, 'r.html'));
        return sweepOut(w, ['--report', join(w, 'r.html')]);
      },
      code: 2,
      stderr: /r\.html: report: expected a path for a file, received a folder/,
      after: (w) => expect(existsSync(join(w, 'out'))).toBe(false),
    },
    {
      name: "a sweep's results.csv is a folder: neither table is written, every row kept in the journal",
      setup: (w) => {
        mkdirSync(join(w, 'out', 'results.csv'), { recursive: true });
        return sweepOut(w);
      },
      code: 2,
      stderr: /results\.csv: results table: expected a path for a file, received a folder/,
      after: (w) => {
        expect(readdirSync(join(w, 'out')).sort()).toEqual(['journal.jsonl', 'results.csv']);
        expect(
          readFileSync(join(w, 'out', 'journal.jsonl'), 'utf8')
            .trimEnd()
            .split('\n'),
        ).toHaveLength(3);
      },
    },
    {
      name: 'simulate --out names a file',
      setup: (w) => {
        writeFileSync(join(w, 'out'), 'keep me');
        return ['simulate', 'qpsk-b2b', '--symbols', '64', '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /out: output folder: expected a folder \(created when missing\), received a regular file/,
    },
    {
      name: "simulate meets one of a capture's files: that capture is not written at all",
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        writeFileSync(join(w, 'out', 'esn0-10db.json'), 'mine');
        return ['simulate', 'qpsk-b2b', '--symbols', '64', '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /esn0-10db\.json: already exists; refusing to overwrite it/,
      after: (w) => {
        expect(readdirSync(join(w, 'out')).sort()).toEqual([
          'esn0-10db.json',
          'esn0-8db-reference.csv',
          'esn0-8db.csv',
          'esn0-8db.json',
        ]);
        expect(readFileSync(join(w, 'out', 'esn0-10db.json'), 'utf8')).toBe('mine');
      },
    },
    {
      name: '--emit-slurm into a missing folder',
      setup: (w) => ['sweep', inputs(w), '--emit-slurm', join(w, 'nope', 'job.sh'), '--tasks', '2'],
      code: 2,
      stderr: /job\.sh: Slurm script: expected a path in an existing folder/,
    },
    {
      name: '--emit-slurm over an existing file',
      setup: (w) => {
        writeFileSync(join(w, 'job.sh'), 'mine');
        return ['sweep', inputs(w), '--emit-slurm', join(w, 'job.sh'), '--tasks', '2'];
      },
      code: 2,
      stderr: /job\.sh: already exists; refusing to overwrite it/,
      after: (w) => expect(readFileSync(join(w, 'job.sh'), 'utf8')).toBe('mine'),
    },
    {
      name: 'merge --report names a folder: neither table is written',
      setup: async (w) => {
        const shard = await runBuilt(sweepOut(w, ['--shard', '0/1']));
        expect(shard.code, shard.stderr).toBe(0);
        mkdirSync(join(w, 'r.html'));
        return ['merge', join(w, 'out'), '--report', join(w, 'r.html')];
      },
      code: 2,
      stderr: /r\.html: report: expected a path for a file, received a folder/,
      after: (w) => expect(readdirSync(join(w, 'out')).sort()).toEqual(['shard-0-of-1']),
    },
  ],

  'file-system conditions as typed errors': [
    {
      name: 'the capture is a folder',
      setup: (w) => {
        mkdirSync(join(inputs(w), 'd.csv'));
        copyFileSync(join(w, 'in', 'a.json'), join(w, 'in', 'd.json'));
        return ['analyze', join(w, 'in', 'd.csv')];
      },
      code: 2,
      stderr: /d\.csv: capture: expected a regular file, received a folder/,
    },
    {
      name: 'the descriptor is a folder',
      setup: (w) => {
        const dir = inputs(w);
        copyFileSync(join(dir, 'a.csv'), join(dir, 'd.csv'));
        mkdirSync(join(dir, 'd.json'));
        return ['analyze', join(dir, 'd.csv')];
      },
      code: 2,
      stderr: /d\.json: descriptor: expected a regular file, received a folder/,
    },
    {
      name: 'the reference is a folder',
      setup: (w) => {
        const data = relabel(w, 'r', { reference: 'refs' });
        mkdirSync(join(w, 'in', 'refs'));
        return ['analyze', data];
      },
      code: 2,
      stderr: /r\.json: field 'reference': expected a \.csv, \.arrow or \.arrows file, received "refs"/,
    },
    {
      name: 'the reference (.csv) is a folder',
      setup: (w) => {
        const data = relabel(w, 'r', { reference: 'refs.csv' });
        mkdirSync(join(w, 'in', 'refs.csv'));
        return ['analyze', data];
      },
      code: 2,
      stderr: /refs\.csv: reference: expected a regular file, received a folder/,
    },
    {
      name: 'the capture is a FIFO',
      setup: (w) => {
        const dir = inputs(w);
        mkfifo(join(dir, 'f.csv'));
        copyFileSync(join(dir, 'a.json'), join(dir, 'f.json'));
        return ['analyze', join(dir, 'f.csv')];
      },
      code: 2,
      stderr: /f\.csv: capture: expected a regular file, received a FIFO \(named pipe\)/,
    },
    {
      name: 'the descriptor is a FIFO',
      setup: (w) => {
        const dir = inputs(w);
        copyFileSync(join(dir, 'a.csv'), join(dir, 'f.csv'));
        mkfifo(join(dir, 'f.json'));
        return ['analyze', join(dir, 'f.csv')];
      },
      code: 2,
      stderr: /f\.json: descriptor: expected a regular file, received a FIFO/,
    },
    {
      name: 'the reference is a FIFO',
      setup: (w) => {
        const data = relabel(w, 'r', { reference: 'pipe.csv' });
        mkfifo(join(w, 'in', 'pipe.csv'));
        return ['analyze', data];
      },
      code: 2,
      stderr: /pipe\.csv: reference: expected a regular file, received a FIFO/,
    },
    {
      name: 'the pipeline file is a FIFO',
      setup: (w) => {
        mkfifo(join(w, 'p.json'));
        return ['analyze', join(inputs(w), 'a.csv'), '--pipeline', join(w, 'p.json')];
      },
      code: 2,
      stderr: /p\.json: pipeline: expected a regular file, received a FIFO/,
    },
    {
      name: 'the pipeline file is a folder',
      setup: (w) => {
        mkdirSync(join(w, 'p.json'));
        return ['analyze', join(inputs(w), 'a.csv'), '--pipeline', join(w, 'p.json')];
      },
      code: 2,
      stderr: /p\.json: pipeline: expected a regular file, received a folder/,
    },
    {
      name: "the sweep's manifest is a FIFO",
      setup: (w) => {
        mkfifo(join(w, 'list.txt'));
        return ['sweep', join(w, 'list.txt'), '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /list\.txt: manifest: expected a regular file, received a FIFO/,
    },
    {
      name: 'the scenario file is a FIFO',
      setup: (w) => {
        mkfifo(join(w, 'scenario.json'));
        return ['simulate', join(w, 'scenario.json'), '--out', join(w, 'out')];
      },
      code: 2,
      stderr: /scenario\.json: scenario: expected a regular file, received a FIFO/,
    },
    {
      name: 'the capture is a link to a character device (/dev/zero)',
      setup: (w) => {
        const dir = inputs(w);
        symlinkSync('/dev/zero', join(dir, 'z.csv'));
        copyFileSync(join(dir, 'a.json'), join(dir, 'z.json'));
        return ['analyze', join(dir, 'z.csv')];
      },
      code: 2,
      stderr: /z\.csv: capture: expected a regular file, received a character device/,
    },
    {
      name: 'the capture is a broken link',
      setup: (w) => {
        const dir = inputs(w);
        symlinkSync(join(dir, 'gone.csv'), join(dir, 'l.csv'));
        copyFileSync(join(dir, 'a.json'), join(dir, 'l.json'));
        return ['analyze', join(dir, 'l.csv')];
      },
      code: 2,
      stderr: /l\.csv: capture: expected an existing file, received ENOENT/,
    },
    {
      name: 'the capture is a loop of links',
      setup: (w) => {
        const dir = inputs(w);
        symlinkSync(join(dir, 'l2.csv'), join(dir, 'l1.csv'));
        symlinkSync(join(dir, 'l1.csv'), join(dir, 'l2.csv'));
        return ['analyze', join(dir, 'l1.csv')];
      },
      code: 2,
      stderr: /l1\.csv: capture: expected an existing file, received ELOOP \(a loop of symbolic links\)/,
    },
    {
      name: 'the capture path goes through a file',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv', 'x.csv')],
      code: 2,
      stderr: /x\.csv: capture: expected an existing file, received ENOTDIR/,
    },
    {
      name: 'the reference is a link to another file: the message names the file the link points to',
      setup: (w) => {
        const data = relabel(w, 'r', { reference: 'linked.csv' });
        symlinkSync(join(w, 'in', 'b.csv'), join(w, 'in', 'linked.csv'));
        return ['analyze', data];
      },
      code: 2,
      stderr: /linked\.csv:\d+:1: header: expected the reference columns .* \(.*linked\.csv is a symbolic link to .*b\.csv\)/,
    },
    {
      name: "the sweep's journal is a folder",
      setup: (w) => {
        mkdirSync(join(w, 'out', 'journal.jsonl'), { recursive: true });
        return sweepOut(w);
      },
      code: 2,
      stderr: /journal\.jsonl: sweep journal: expected a regular file, received a folder/,
      after: (w) => expect(readdirSync(join(w, 'out'))).toEqual(['journal.jsonl']),
    },
    {
      name: "the sweep's journal is a FIFO",
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        mkfifo(join(w, 'out', 'journal.jsonl'));
        return sweepOut(w);
      },
      code: 2,
      stderr: /journal\.jsonl: sweep journal: expected a regular file, received a FIFO/,
    },
    {
      name: "a shard's record is a folder: the merge says so",
      setup: (w) => {
        mkdirSync(join(w, 'out', 'shard-0-of-1', 'shard.json'), { recursive: true });
        return ['merge', join(w, 'out')];
      },
      code: 2,
      stderr: /shard\.json: shard record: expected a regular file, received a folder/,
    },
    {
      name: "a shard's record is a folder: the shard's sweep says so",
      setup: (w) => {
        mkdirSync(join(w, 'out', 'shard-0-of-1', 'shard.json', 'x'), { recursive: true });
        return sweepOut(w, ['--shard', '0/1']);
      },
      code: 2,
      stderr: /shard\.json: shard record: expected a file that can be removed, received ERR_FS_EISDIR \(a folder\)/,
    },
    {
      name: "the demo's temporary folder (TMPDIR) does not exist",
      setup: () => ['demo'],
      env: (w) => ({ TMPDIR: join(w, 'no-such-folder') }),
      code: 2,
      stderr:
        /no-such-folder: temporary folder: expected a writable folder for the demo \(set TMPDIR to another\), received ENOENT/,
    },
    {
      name: 'the sweep input does not exist',
      setup: (w) => ['sweep', join(w, 'nothing-here'), '--out', join(w, 'out')],
      code: 2,
      stderr: /nothing-here: sweep input: expected a folder of captures or a manifest file, received ENOENT/,
    },
    {
      name: 'a swept capture is a FIFO: its row says so, the others are measured',
      setup: (w) => {
        const dir = inputs(w);
        mkfifo(join(dir, 'f.csv'));
        copyFileSync(join(dir, 'a.json'), join(dir, 'f.json'));
        return ['sweep', dir, '--jobs', '2', '--out', join(w, 'out')];
      },
      code: 1,
      stdout: /f\.csv: input: .*f\.csv: capture: expected a regular file, received a FIFO/,
    },
    {
      name: 'a swept capture is a link: it is swept like the others',
      setup: (w) => {
        const dir = join(w, 'in');
        mkdirSync(dir);
        for (const f of ['a.csv', 'a.json', 'a-reference.csv']) symlinkSync(join(captures, f), join(dir, f));
        return ['sweep', dir, '--jobs', '1', '--out', join(w, 'out')];
      },
      code: 0,
      stdout: /swept 1 captures: analysed 1/,
    },
    {
      name: 'a swept folder holds a loop of folder links: each folder is walked once',
      setup: (w) => {
        const dir = inputs(w);
        symlinkSync(dir, join(dir, 'again'));
        return ['sweep', dir, '--jobs', '2', '--out', join(w, 'out')];
      },
      code: 0,
      stdout: /swept 3 captures: analysed 3/,
    },
    {
      name: 'a swept capture is a broken link: its row says so',
      setup: (w) => {
        const dir = inputs(w);
        symlinkSync(join(dir, 'gone.csv'), join(dir, 'l.csv'));
        copyFileSync(join(dir, 'a.json'), join(dir, 'l.json'));
        return ['sweep', dir, '--jobs', '2', '--out', join(w, 'out')];
      },
      code: 1,
      stdout: /l\.csv: input: .*l\.csv: capture: expected an existing file, received ENOENT/,
    },
  ],

  'the journal read like any input, and the lock': [
    {
      name: 'a torn last line: set aside, its capture analysed again',
      setup: (w) => damagedJournal(w, (l) => `${l[0]}\n${l[1]}\n${l[2].slice(0, 200)}`),
      code: 0,
      stderr: /journal\.jsonl:3: set aside to journal-set-aside\.jsonl: an incomplete last line/,
      stdout: /analysed 1, skipped 2/,
      after: (w) => {
        sameTables(w);
        expect(readFileSync(join(w, 'out', 'journal-set-aside.jsonl'), 'utf8')).toContain('"capture"');
      },
    },
    {
      name: 'a line that is not JSON in the middle',
      setup: (w) => damagedJournal(w, (l) => `${l[0]}\n{"capture": "b.csv", oops\n${l[1]}\n${l[2]}\n`),
      code: 0,
      stderr: /journal\.jsonl:2: set aside to journal-set-aside\.jsonl: not a JSON line/,
      stdout: /analysed 0, skipped 3/,
      after: sameTables,
    },
    {
      name: 'a row without its ber column',
      setup: (w) => damagedJournal(w, (l) => editRow(l, 1, (r) => delete r.ber)),
      code: 0,
      stderr:
        /journal\.jsonl:2: set aside .*column 'ber': expected a finite number or null, received nothing; b\.csv is analysed again/,
      stdout: /analysed 1, skipped 2/,
      after: sameTables,
    },
    {
      name: 'a row whose ber is the text "NaN"',
      setup: (w) =>
        damagedJournal(w, (l) =>
          editRow(l, 0, (r) => {
            r.ber = 'NaN';
          }),
        ),
      code: 0,
      stderr: /journal\.jsonl:1: set aside .*column 'ber': expected a finite number or null, received "NaN"/,
      after: sameTables,
    },
    {
      name: 'a row whose BER is not a probability',
      setup: (w) =>
        damagedJournal(w, (l) =>
          editRow(l, 2, (r) => {
            r.ber = 7;
          }),
        ),
      code: 0,
      stderr: /journal\.jsonl:3: set aside .*column 'ber': expected a probability in \[0, 1\], received 7/,
      after: sameTables,
    },
    {
      name: 'a row with a column of its own',
      setup: (w) =>
        damagedJournal(w, (l) =>
          editRow(l, 0, (r) => {
            r.operator = 'me';
          }),
        ),
      code: 0,
      stderr: /journal\.jsonl:1: set aside .*column "operator": not a column of the table/,
      after: sameTables,
    },
    {
      name: 'a row whose bit count is a fraction',
      setup: (w) =>
        damagedJournal(w, (l) =>
          editRow(l, 1, (r) => {
            r.bits = 1.5;
          }),
        ),
      code: 0,
      stderr: /column 'bits': expected a whole number ≥ 0 or null, received 1\.5/,
      after: sameTables,
    },
    {
      name: 'a row whose ok flag is the text "yes"',
      setup: (w) =>
        damagedJournal(w, (l) =>
          editRow(l, 1, (r) => {
            r.ok = 'yes';
          }),
        ),
      code: 0,
      stderr: /column 'ok': expected true or false or null, received "yes"/,
      after: sameTables,
    },
    {
      name: 'an entry whose input hash is not a SHA-256',
      setup: (w) =>
        damagedJournal(w, (l) => {
          const e = JSON.parse(l[1]);
          e.inputSha256 = 'abc';
          l[1] = JSON.stringify(e);
          return `${l.join('\n')}\n`;
        }),
      code: 0,
      stderr: /journal\.jsonl:2: set aside .*key 'inputSha256': expected a SHA-256 in hex/,
      after: sameTables,
    },
    {
      name: 'an entry whose row names another capture',
      setup: (w) =>
        damagedJournal(w, (l) =>
          editRow(l, 0, (r) => {
            r.capture = 'b.csv';
          }),
        ),
      code: 0,
      stderr: /journal\.jsonl:1: set aside .*row: column 'capture': expected "a\.csv", as the entry/,
      after: sameTables,
    },
    {
      name: 'a row of an older layout (without the bound columns)',
      setup: (w) => damagedJournal(w, (l) => editRow(l, 2, (r) => delete r.ber_is_upper_bound)),
      code: 0,
      stderr: /journal\.jsonl:3: set aside .*column 'ber_is_upper_bound'/,
      after: sameTables,
    },
    {
      name: 'zero bytes where a crash left the end of the journal',
      setup: (w) => damagedJournal(w, (l) => `${l[0]}\n${l[1]}\n${'\u0000'.repeat(300)}`),
      code: 0,
      stderr: /journal\.jsonl:3: set aside .*an incomplete last line/,
      stdout: /analysed 1, skipped 2/,
      after: sameTables,
    },
    {
      name: 'a journal saved as UTF-16 by an editor: every line set aside, every capture analysed again',
      setup: (w) => damagedJournal(w, (l) => `\ufeff${l.join('\n')}\n`.split('').join('\u0000')),
      code: 0,
      stdout: /analysed 3, skipped 0/,
      after: sameTables,
    },
    {
      name: 'valid lines twice and with CRLF line ends: nothing set aside',
      setup: (w) => damagedJournal(w, (l) => `${[...l, ...l].join('\r\n')}\r\n`),
      code: 0,
      stdout: /analysed 0, skipped 3/,
      after: (w, r) => {
        expect(r.stderr).not.toMatch(/set aside/);
        sameTables(w);
      },
    },
    {
      name: 'an empty journal',
      setup: (w) => damagedJournal(w, () => ''),
      code: 0,
      stdout: /analysed 3, skipped 0/,
      after: sameTables,
    },
    {
      name: 'a stale lock left by a process that is gone: taken over',
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        const holder = { pid: deadPid(), host: hostname(), since: '2024-01-01T00:00:00Z', purpose: 'sweep' };
        writeFileSync(join(w, 'out', 'sweep.lock'), JSON.stringify(holder));
        return sweepOut(w);
      },
      code: 0,
      stderr: /sweep: took over the lock of .*out from process \d+ on .*, which is no longer running/,
      after: (w) => expect(readdirSync(join(w, 'out'))).not.toContain('sweep.lock'),
    },
    {
      name: 'a lock held by a running process: refused, nothing touched',
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        const holder = { pid: process.pid, host: hostname(), since: '2024-01-01T00:00:00Z', purpose: 'sweep' };
        writeFileSync(join(w, 'out', 'sweep.lock'), JSON.stringify(holder));
        return sweepOut(w);
      },
      code: 2,
      stderr:
        /out: output folder: expected a folder no other sweep or merge is writing \(wait for it to finish\), received one locked: sweep by process \d+ on /,
      after: (w) => expect(readdirSync(join(w, 'out'))).toEqual(['sweep.lock']),
    },
    {
      name: 'a lock of another machine: refused, naming the machine',
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        writeFileSync(join(w, 'out', 'sweep.lock'), JSON.stringify({ pid: 1, host: 'node-17', since: 'x', purpose: 'sweep' }));
        return sweepOut(w);
      },
      code: 2,
      stderr: /if it is not running on node-17, remove .*sweep\.lock\), received one locked: sweep by process 1 on node-17/,
    },
    {
      name: 'a lock file holding no owner',
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        writeFileSync(join(w, 'out', 'sweep.lock'), 'garbage');
        return sweepOut(w);
      },
      code: 2,
      stderr: /its lock file .*sweep\.lock holds no owner; remove it if no sweep or merge is running/,
    },
    {
      name: 'the lock file is a folder',
      setup: (w) => {
        mkdirSync(join(w, 'out', 'sweep.lock'), { recursive: true });
        return sweepOut(w);
      },
      code: 2,
      stderr: /sweep\.lock: lock file: expected a regular file, received a folder/,
    },
    {
      name: 'a merge into a folder a sweep is writing',
      setup: (w) => {
        mkdirSync(join(w, 'out'));
        const holder = { pid: process.pid, host: hostname(), since: 'now', purpose: 'sweep' };
        writeFileSync(join(w, 'out', 'sweep.lock'), JSON.stringify(holder));
        return ['merge', join(w, 'out')];
      },
      code: 2,
      stderr: /received one locked: sweep by process/,
    },
  ],

  'inspect on signals without a band': [
    {
      name: 'all-zero channels',
      setup: (w) => ['inspect', dataFile(w, `xi,xq,yi,yq\n${'0,0,0,0\n'.repeat(4096)}`)],
      code: 0,
      stdout: /symbol rate +not estimated: no band in the spectrum \(expected a signal above the noise floor\)/,
    },
    {
      name: 'a pure tone',
      setup: (w) => {
        let text = 'xi,xq,yi,yq\n';
        for (let n = 0; n < 4096; n++) {
          const c = Math.cos(0.2 * Math.PI * n);
          const s = Math.sin(0.2 * Math.PI * n);
          text += `${c},${s},${c},${s}\n`;
        }
        return ['inspect', dataFile(w, text)];
      },
      code: 0,
      stdout: /symbol rate +not estimated: no band in the spectrum/,
    },
    {
      name: 'constant channels',
      setup: (w) => ['inspect', dataFile(w, `xi,xq,yi,yq\n${'0.5,0.5,0.5,0.5\n'.repeat(4096)}`), '--json'],
      code: 0,
      stdout: /"estimateBd":null,"reason":"the band is narrower than 16 frequency bins/,
    },
    {
      name: 'ten samples',
      setup: (w) => ['inspect', dataFile(w, `xi,xq,yi,yq\n${'1,0,0,1\n'.repeat(10)}`)],
      code: 2,
      stderr: /x\.csv: data: expected at least 64 samples for a spectrum, received 10/,
    },
  ],

  'bounds checked before allocating': [
    {
      name: 'a descriptor stating 6e73 Sa/s',
      setup: (w) => ['analyze', relabel(w, 'a', { sampleRate: 6e73 })],
      code: 2,
      stderr: /a\.json:2:\d+: field 'sampleRate': expected at most 10000000000000 Sa\/s, received 6e\+73/,
    },
    {
      name: '--sample-rate 64e15',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--sample-rate', '64e15'],
      code: 2,
      stderr: /--sample-rate expected at most 10000000000000, received '64e15'/,
    },
    {
      name: 'a descriptor stating 300 samples per symbol',
      setup: (w) => ['analyze', relabel(w, 'a', { sampleRate: 9.6e12 })],
      code: 2,
      stderr: /field 'sampleRate': expected at most 256 samples per symbol/,
    },
    {
      name: 'simulate --symbols 1e12: refused before allocating',
      setup: (w) => ['simulate', 'qpsk-b2b', '--symbols', '1e12', '--out', join(w, 'out')],
      code: 2,
      stderr: /option 'symbols' expected at most 2097152 symbols at 2 samples per symbol/,
      after: (w) => expect(readdirSync(w)).not.toContain('out'),
    },
    {
      name: 'a scenario asking for a million samples per symbol',
      setup: (w) => {
        const scenario = {
          name: 's',
          base: { symbolRate: 1e9, symbols: 64, modulation: 'qpsk' },
          captures: [{ name: 'x', seed: 1, samplesPerSymbol: 1e6 }],
        };
        writeFileSync(join(w, 's.json'), JSON.stringify(scenario));
        return ['simulate', join(w, 's.json'), '--out', join(w, 'out')];
      },
      code: 2,
      stderr:
        /option 'symbols' expected at most 4 symbols at 1000000 samples per symbol|option 'samplesPerSymbol' expected at most 256/,
    },
    {
      name: '--dispersion 1e9 ps/nm',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--dispersion', '1e9'],
      code: 2,
      stderr:
        /--dispersion: expected at most ±\d+ ps\/nm at 32000000000 Bd \(a compensation filter of at most 262144 taps\), received 1000000000/,
    },
    {
      name: 'a descriptor stating 1e12 ps/nm',
      setup: (w) => ['analyze', relabel(w, 'a', { dispersionPsPerNm: 1e12 })],
      code: 2,
      stderr: /a\.json:\d+:\d+: field 'dispersionPsPerNm': expected at most ±\d+ ps\/nm/,
    },
    {
      name: '--jobs 1e9',
      setup: (w) => ['sweep', inputs(w), '--jobs', '1e9', '--out', join(w, 'out')],
      code: 2,
      stderr: /--jobs expected at most 1024, received '1e9'/,
    },
    {
      name: '--tasks 1e9',
      setup: (w) => ['sweep', inputs(w), '--emit-slurm', join(w, 'job.sh'), '--tasks', '1e9'],
      code: 2,
      stderr: /--tasks expected at most 100000, received '1e9'/,
    },
    {
      name: 'inspect --segment 1e12',
      setup: (w) => ['inspect', join(inputs(w), 'a.csv'), '--segment', '1e12'],
      code: 2,
      stderr: /--segment expected 8 to 1048576, received 1000000000000/,
    },
  ],

  'bounds marked as bounds': [
    {
      name: 'the summary marks a BER without errors "<" and its Q ">"',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv')],
      code: 0,
      stdout: /\ntotal +< \d\.\d\de-\d .* > \d+\.\d\d /,
    },
    {
      name: 'the JSON flags the BER bound and the Q bound; a negative linewidth estimate is no figure',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--json'],
      code: 0,
      stdout: /"berIsUpperBound":true.*"qDb":[\d.]+,"qIsLowerBound":true.*"linewidthHz":null,"linewidthBelowResolution":true/,
    },
    {
      name: 'the summary says the linewidth is below the resolution instead of a negative figure',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv')],
      code: 0,
      stdout: /linewidth below the estimate's resolution/,
    },
    {
      name: 'the tables flag the bound, with boolean and integer Arrow columns; the page marks it "<"',
      setup: (w) => sweepOut(w, ['--report', join(w, 'sweep.html')]),
      code: 0,
      after: (w) => {
        const csv = readFileSync(join(w, 'out', 'results.csv'), 'utf8').split('\n');
        const header = csv[0].split(',');
        const a = csv[1].split(',');
        expect(a[header.indexOf('ber_is_upper_bound')]).toBe('true');
        expect(a[header.indexOf('q_db_is_lower_bound')]).toBe('true');
        const t = tableFromIPC(readFileSync(join(w, 'out', 'results.arrow')));
        const type = (c: string) => String(t.schema.fields.find((f) => f.name === c)?.type);
        expect([type('ok'), type('ber_is_upper_bound'), type('bits'), type('bit_errors'), type('cycle_slips')]).toEqual([
          'Bool',
          'Bool',
          'Int64',
          'Int64',
          'Int64',
        ]);
        expect(t.getChild('ber_is_upper_bound')?.get(0)).toBe(true);
        expect(readFileSync(join(w, 'sweep.html'), 'utf8')).toMatch(/<td class="num">&lt; \d\.\d\de-\d<\/td>/);
      },
    },
    {
      name: 'the analysis page marks the BER "<" and the Q ">"',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--report', join(w, 'a.html')],
      code: 0,
      after: (w) => {
        const html = readFileSync(join(w, 'a.html'), 'utf8');
        expect(html).toMatch(/&lt; \d\.\d+e-\d/);
        expect(html).toMatch(/&gt; \d+\.\d+/);
      },
    },
  ],

  'messages that name the input': [
    {
      name: 'a CSV with a UTF-8 byte-order mark is read',
      setup: (w) => {
        const data = relabel(w, 'bom', {});
        writeFileSync(data, Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), readFileSync(data)]));
        return ['analyze', data];
      },
      code: 0,
    },
    {
      name: 'a UTF-16 CSV',
      setup: (w) => ['analyze', dataFile(w, Buffer.from(`\ufeff${readFileSync(join(captures, 'a.csv'), 'utf8')}`, 'utf16le'))],
      code: 2,
      stderr: /x\.csv:1:1: encoding: expected CSV text in UTF-8, received UTF-16 text, little-endian \(save it as UTF-8\)/,
    },
    {
      name: 'a gzip-compressed CSV',
      setup: (w) => ['analyze', dataFile(w, gzipSync(readFileSync(join(captures, 'a.csv'))))],
      code: 2,
      stderr: /x\.csv:1:1: encoding: expected CSV text in UTF-8, received gzip-compressed data \(decompress it first\)/,
    },
    {
      name: 'a ZIP archive named .csv',
      setup: (w) => ['analyze', dataFile(w, Buffer.from([0x50, 0x4b, 0x03, 0x04, 20, 0, 0, 0, 8, 0]))],
      code: 2,
      stderr: /received a ZIP archive \(extract it first\)/,
    },
    {
      name: 'a UTF-16 descriptor',
      setup: (w) => {
        const data = relabel(w, 'u', {});
        writeFileSync(join(w, 'in', 'u.json'), Buffer.from(`\ufeff${readFileSync(join(w, 'in', 'u.json'), 'utf8')}`, 'utf16le'));
        return ['analyze', data];
      },
      code: 2,
      stderr: /u\.json: descriptor encoding: expected UTF-8 text, received UTF-16 text, little-endian/,
    },
    {
      name: 'a descriptor with a UTF-8 byte-order mark is read',
      setup: (w) => {
        const data = relabel(w, 'b', {});
        writeFileSync(join(w, 'in', 'b.json'), `\ufeff${readFileSync(join(w, 'in', 'b.json'), 'utf8')}`);
        return ['analyze', data];
      },
      code: 0,
    },
    {
      name: 'terminal escape sequences in a header and a cell are escaped in the message',
      setup: (w) => ['analyze', dataFile(w, 'xi,xq,yi,\u001b[2J\u009b31m\n1,2,3,4\n')],
      code: 2,
      after: (_w, r) => {
        expect(r.stderr).toMatch(/\\u001b\[2J\\u009b31m/);
        expect(r.stderr.includes('\u001b') || r.stderr.includes('\u009b'), 'a raw control character on stderr').toBe(false);
      },
    },
    {
      name: 'binary bytes in a cell are shown escaped',
      setup: (w) => [
        'analyze',
        dataFile(w, Buffer.concat([Buffer.from('xi,xq,yi,yq\n1,2,3,'), Buffer.from([0x1b, 0x9b, 0xff, 0x0a])])),
      ],
      code: 2,
      stderr: /x\.csv:2:7: column 'yq' \(field 4\): expected a finite decimal number, received "\\u001b\ufffd\ufffd"/,
      after: (_w, r) => expect(r.stderr.includes('\u001b') || r.stderr.includes('\u009b')).toBe(false),
    },
    {
      name: 'a one-line binary file longer than the read buffer',
      setup: (w) => ['analyze', dataFile(w, Buffer.alloc(3 << 20, 0x41))],
      code: 2,
      stderr: /x\.csv:1: line: expected a line shorter than the read buffer/,
    },
    {
      name: 'two channels mapped to one column',
      setup: (w) => ['analyze', relabel(w, 'a', { columns: { xi: 'xi', xq: 'XI' } })],
      code: 2,
      stderr:
        /a\.json:\d+:\d+: field 'columns': expected a different column for each channel \(and the time\), received xi and xq both mapped to "XI"/,
    },
    {
      name: 'a symbol rate the data do not carry',
      setup: (w) => ['analyze', relabel(w, 'a', { symbolRate: 8e9 })],
      code: 2,
      stderr: /a\.json:\d+:\d+: field 'symbolRate': expected a symbol rate the data carry \(.*shows about 3\d\.\d GBd/,
    },
    {
      name: 'a --symbol-rate the data do not carry: the option is named',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--symbol-rate', '8e9'],
      code: 2,
      stderr: /^--symbol-rate: expected a symbol rate the data carry/m,
    },
    {
      name: 'ten samples',
      setup: (w) => ['analyze', dataFile(w, `xi,xq,yi,yq\n${'1,0,0,1\n'.repeat(10)}`)],
      code: 2,
      stderr:
        /x\.csv: data: expected a capture long enough to measure \(more than 2176 symbols: .*\), received 10 samples \(5 symbols at 2 samples per symbol\)/,
    },
    {
      name: 'an unknown --modulation is blamed on the option',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--modulation', '8psk'],
      code: 2,
      stderr:
        /^intradyne analyze: --modulation expected one of qpsk, 8qam, 16qam, 32qam, 64qam, 128qam, 256qam, or ps-64qam or ps-256qam with ':entropy=H' or ':nu=ν' \(as ps-64qam:entropy=4.5\), received '8psk'$/m,
    },
    {
      name: 'a --sample-rate below the descriptor symbol rate is blamed on the option',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--sample-rate', '1e9'],
      code: 2,
      stderr: /^--sample-rate: expected at least the symbol rate \(32000000000 Bd\) in Sa\/s, received 1000000000$/m,
    },
    {
      name: 'a --symbol-rate above the descriptor sample rate is blamed on the option',
      setup: (w) => ['analyze', join(inputs(w), 'a.csv'), '--symbol-rate', '1e11'],
      code: 2,
      stderr:
        /^--symbol-rate: expected a symbol rate the sample rate of .*a\.json \(64000000000 Sa\/s\) can carry: the sample rate must be at least the symbol rate/m,
    },
    {
      name: 'an Arrow stream cut between two record batches: analysed with a warning',
      setup: (w) => {
        const bytes = arrowStream();
        return ['analyze', arrowCapture(w, bytes.subarray(0, bytes.length - 8)), '--json'];
      },
      code: 0,
      stderr: /warning: .*s\.arrows: the Arrow IPC stream has no end-of-stream marker: it may have been cut short/,
      stdout: /"warnings":\[".*no end-of-stream marker/,
    },
    {
      name: 'a whole Arrow stream: no warning',
      setup: (w) => ['analyze', arrowCapture(w, arrowStream())],
      code: 0,
      after: (_w, r) => expect(r.stderr).not.toMatch(/warning/),
    },
    {
      name: 'an Arrow stream cut inside a record batch',
      setup: (w) => {
        const bytes = arrowStream();
        return ['analyze', arrowCapture(w, bytes.subarray(0, Math.floor(bytes.length * 0.6)))];
      },
      code: 2,
      stderr: /s\.arrows: Arrow IPC: expected complete record batches, received a damaged file/,
    },
    {
      name: 'an Arrow file cut short',
      setup: (w) => {
        const block = arrowStream();
        const file = tableToIPC(tableFromIPC(block), 'file');
        return ['analyze', arrowCapture(w, file.subarray(0, file.length - 100), '.arrow')];
      },
      code: 2,
      stderr: /s\.arrow: Arrow IPC: expected an Arrow IPC file or stream, received unreadable bytes/,
    },
  ],
};

describe('the fault catalogue: every case ends in its exit code with a typed message and nothing lost', () => {
  for (const [kind, cases] of Object.entries(CASES)) {
    describe(kind, () => {
      for (const c of cases) {
        it(c.name, async () => {
          const work = mkdtempSync(join(tmpdir(), 'intradyne-fault-'));
          try {
            const argv = await c.setup(work);
            const watched = join(work, 'in');
            const before = readdirSync(work).includes('in') ? snapshot(watched) : null;
            const run = await runBuiltWithin(argv, DEADLINE_MS, c.env?.(work));
            expect(run.hung, `${c.name}: still running after ${DEADLINE_MS} ms`).toBe(false);
            expectTypedOutcome(run, c.name);
            expect(run.code, `${c.name}\nstdout: ${run.stdout}\nstderr: ${run.stderr}`).toBe(c.code);
            if (c.stderr) expect(run.stderr).toMatch(c.stderr);
            if (c.stdout) expect(run.stdout).toMatch(c.stdout);
            if (before) expect(snapshot(watched), 'the inputs are untouched').toEqual(before);
            expectCompleteOutputs(work, (p) => p === watched);
            c.after?.(work, run);
          } finally {
            rmSync(work, { recursive: true, force: true });
          }
        });
      }
    });
  }
});

describe('faults of the output streams and of concurrency', () => {
  it('a reader that closes the pipe early (| head) ends the command quietly', async () => {
    const work = mkdtempSync(join(tmpdir(), 'intradyne-fault-'));
    try {
      const data = join(inputs(work), 'a.csv');
      const child = spawn(process.execPath, [BUILT_CLI, 'analyze', data, '--json'], {
        stdio: ['ignore', 'pipe', 'pipe'],
      });
      let stderr = '';
      child.stderr.on('data', (d) => {
        stderr += d;
      });
      // Close our end at once, as `head -c 0` would.
      child.stdout.destroy();
      const code = await new Promise<number>((resolve) => child.on('close', (c) => resolve(c ?? -1)));
      expect(stderr).not.toMatch(/EPIPE|^\s+at /m);
      expect(code).toBe(0);
    } finally {
      rmSync(work, { recursive: true, force: true });
    }
  });

  it('two sweeps into one folder: the second, started while the first runs, is refused and touches nothing', async () => {
    const work = mkdtempSync(join(tmpdir(), 'intradyne-fault-'));
    try {
      const dir = inputs(work);
      const out = join(work, 'out');
      let second: Promise<CliRun & { hung: boolean }> | undefined;
      // The second starts once the first holds the lock: the first then has three analyses (seconds) to go.
      const first = runBuilt(['sweep', dir, '--jobs', '1', '--out', out], () => {
        const poll = setInterval(() => {
          if (existsSync(join(out, 'sweep.lock'))) {
            clearInterval(poll);
            second = runBuiltWithin(['sweep', dir, '--jobs', '1', '--out', out], DEADLINE_MS);
          }
        }, 2);
      });
      const one = await first;
      expect(one.code, one.stderr).toBe(0);
      expect(second, 'the second sweep was started').toBeDefined();
      const two = await (second as Promise<CliRun>);
      expect(two.code, two.stderr).toBe(2);
      expect(two.stderr).toMatch(/received one locked: sweep by process \d+ on /);
      expectTypedOutcome(two);
      // The journal holds each capture once: nothing was analysed twice.
      expect(readFileSync(join(out, 'journal.jsonl'), 'utf8').trimEnd().split('\n')).toHaveLength(3);
      expectCompleteOutputs(work, (p) => p === dir);
      expect(readdirSync(out)).not.toContain('sweep.lock');
    } finally {
      rmSync(work, { recursive: true, force: true });
    }
  });
});
