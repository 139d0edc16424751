import { copyFileSync, cpSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DESCRIPTOR_FIELDS } from '../../src/capture/descriptor.js';
import { expectCompleteOutputs, expectTypedOutcome, snapshot } from '../support/outputs.js';
import { type CliRun, runBuilt, runBuiltWithin, runMain } from '../support/run-cli.js';
import { sweptTinyCaptures } from '../support/tiny-captures.js';

// Properties over the command's inputs: whatever the descriptor, the option
// values, the CSV bytes, the journal lines, the manifest, the scenario or a
// shard record hold, the command ends in exit 0, 1 or 2 with a typed
// message — never an exception, a stack trace or a hang — leaves the inputs
// as they were and no file half-written. The run counts are modest (the
// suite runs in CI on two cores): about 250 generated cases in all, each
// tens of milliseconds to a second.

let base: string;
let captures: string;
let referenceSweep: string;
let shardRecord: string;

beforeAll(async () => {
  ({ base, captures, referenceSweep } = await sweptTinyCaptures('intradyne-properties-'));
  const shard = await runBuilt(['sweep', captures, '--jobs', '1', '--shard', '0/1', '--out', join(base, 'sharded')]);
  expect(shard.code, shard.stderr).toBe(0);
  shardRecord = readFileSync(join(base, 'sharded', 'shard-0-of-1', 'shard.json'), 'utf8');
});
afterAll(() => rmSync(base, { recursive: true, force: true }));

/** A fresh folder holding copies of the three captures, removed after `body`. */
async function withInputs<T>(body: (work: string, inputs: string) => Promise<T>): Promise<T> {
  const work = mkdtempSync(join(tmpdir(), 'intradyne-property-'));
  try {
    const inputs = join(work, 'in');
    cpSync(captures, inputs, { recursive: true });
    return await body(work, inputs);
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}

/** Runs the command in this process: an exception (a bug) fails the property with its stack. */
async function run(argv: readonly string[]): Promise<CliRun> {
  try {
    return await runMain(argv);
  } catch (e) {
    throw new Error(`intradyne ${argv.join(' ')} threw instead of exiting: ${(e as Error).stack}`);
  }
}

/** Exit codes seen by a property, to check that its runs reached both ends: measured (0) and refused (2). */
function tally(): { seen: Set<number>; add: (code: number) => void } {
  const seen = new Set<number>();
  return { seen, add: (code) => seen.add(code) };
}

/** The promises every outcome keeps, with the inputs' snapshot from before the run. */
function kept(r: CliRun, work: string, inputs: string, before: Record<string, string>, label: string): void {
  expectTypedOutcome(r, label);
  expect(snapshot(inputs), `${label}: the inputs are untouched`).toEqual(before);
  expectCompleteOutputs(work, (p) => p === inputs);
}

/** Whether text holds a character a terminal acts on (line breaks aside). */
function hasControlCharacter(text: string): boolean {
  for (const ch of text) {
    const c = ch.charCodeAt(0);
    if ((c < 0x20 && c !== 0x0a && c !== 0x09) || (c >= 0x7f && c <= 0x9f)) return true;
  }
  return false;
}

/** Text that reads as a number, nearly one, or nothing like one. */
const numberText = fc.oneof(
  fc.double().map(String),
  fc.integer().map(String),
  fc.constantFrom('64e9', '32e9', '8e10', '1e300', '64e15', '6e73', '-1', '0', '-0', '1e-320', '0x20', 'Infinity', 'NaN'),
  fc.constantFrom('', ' ', '1e', '.', '+', '32 GBd', '1,5', '١٢', '\u0000', '--', '1e309', '2.5', '256', '1024'),
  fc.string({ maxLength: 8 }),
);

/** A descriptor value of any JSON kind, biased to the fields' own. */
const jsonValue: fc.Arbitrary<unknown> = fc.oneof(
  fc.double(),
  fc.constantFrom(64e9, 32e9, 80e9, 1e13, 1e14, 6e73, -32e9, 0, 0.1, 1, 1.5, 1360, 1e12, -1e9),
  fc.constantFrom('qpsk', '16QAM', '64qam', '8psk', 'a-reference.csv', 'b.csv', 'missing.csv', '', '../a-reference.csv'),
  fc.string({ maxLength: 12 }),
  fc.constantFrom(null, true, false, [], {}, [1, 2]),
  fc.dictionary(
    fc.constantFrom('xi', 'xq', 'yi', 'yq', 't', 'zz'),
    fc.constantFrom('xi', 'XI', 'xq', 'yi', 'yq', 't', 'CH1', '', 'xi '),
  ),
);

/** The descriptor's fields and one it does not have. */
const FIELDS = [...DESCRIPTOR_FIELDS, 'unknownField'] as const;

describe('properties of the command over its inputs', () => {
  it('any descriptor: analyze ends typed, the capture untouched', async () => {
    const outcomes = tally();
    const valid = JSON.parse(readFileSync(join(captures, 'a.json'), 'utf8'));
    await fc.assert(
      fc.asyncProperty(
        fc.oneof(
          { weight: 2, arbitrary: fc.constant({}) },
          { weight: 3, arbitrary: fc.dictionary(fc.constantFrom(...FIELDS), jsonValue, { maxKeys: 1 }) },
          { weight: 3, arbitrary: fc.dictionary(fc.constantFrom(...FIELDS), jsonValue, { maxKeys: 6 }) },
        ),
        fc.oneof({ weight: 3, arbitrary: fc.constant(true) }, { weight: 1, arbitrary: fc.constant(false) }),
        fc.oneof(
          { weight: 4, arbitrary: fc.constant('') },
          { weight: 1, arbitrary: fc.constantFrom('\ufeff', ' ', '\n', '[', '{"a":', '//') },
        ),
        async (change, keepValid, prefix) =>
          withInputs(async (work, inputs) => {
            const doc = keepValid ? { ...valid, ...change } : change;
            writeFileSync(join(inputs, 'a.json'), prefix + JSON.stringify(doc, null, 1));
            const before = snapshot(inputs);
            const r = await run(['analyze', join(inputs, 'a.csv')]);
            kept(r, work, inputs, before, JSON.stringify(doc));
            outcomes.add(r.code);
            if (r.code === 2) expect(r.stderr).toMatch(/a\.json|a\.csv|reference|--\w|a-reference|b\.csv|missing\.csv/);
          }),
      ),
      { numRuns: 50 },
    );
    expect([...outcomes.seen].sort()).toEqual(expect.arrayContaining([0, 2]));
  });

  it('any option values: analyze ends typed, writing its outputs whole or not at all', async () => {
    const plausible: Record<string, readonly string[]> = {
      '--modulation': ['qpsk', 'QPSK', '16qam'],
      '--symbol-rate': ['32e9', '3.2e10'],
      '--sample-rate': ['64e9', '6.4e10', '80e9'],
      '--roll-off': ['0.1', '0.2'],
      '--dispersion': ['0', '100', '-50'],
      '--skip': ['1024', '2048', '100'],
    };
    const options = Object.keys(plausible);
    const outcomes = tally();
    const given = fc.oneof(
      {
        weight: 3,
        arbitrary: fc.constantFrom(...options).chain((o) => fc.tuple(fc.constant(o), fc.constantFrom(...plausible[o]))),
      },
      { weight: 2, arbitrary: fc.tuple(fc.constantFrom(...options), numberText) },
    );
    await fc.assert(
      fc.asyncProperty(fc.array(given, { maxLength: 3 }), fc.boolean(), async (given, withOutputs) =>
        withInputs(async (work, inputs) => {
          const argv = ['analyze', join(inputs, 'a.csv'), ...given.flatMap(([o, v]) => [`${o}=${v}`])];
          if (withOutputs) argv.push('--out', join(work, 'out'), '--report', join(work, 'a.html'));
          const before = snapshot(inputs);
          const r = await run(argv);
          kept(r, work, inputs, before, argv.slice(2).join(' '));
          outcomes.add(r.code);
          if (withOutputs) {
            // Both outputs or neither, and the page with them.
            const out = readdirSync(work).includes('out') ? readdirSync(join(work, 'out')).sort() : [];
            expect([[], ['a.analysis.json', 'a.symbols.arrow']]).toContainEqual(out);
            expect(readdirSync(work).includes('a.html')).toBe(out.length > 0);
          }
        }),
      ),
      { numRuns: 50 },
    );
    expect([...outcomes.seen].sort()).toEqual(expect.arrayContaining([0, 2]));
  });

  it('any damage to a capture CSV: analyze and inspect end typed, naming the file', async () => {
    const outcomes = tally();
    const text = readFileSync(join(captures, 'a.csv'));
    const damage = fc.oneof(
      fc.string({ maxLength: 6 }),
      fc.uint8Array({ minLength: 1, maxLength: 6 }).map((b) => Buffer.from(b).toString('latin1')),
      fc.constantFrom('\u0000', '\ufeff', '\r', '\n', ',', '"', '#', 'NaN', '1e999', '\u001b[2J', '\uffff'),
      // A digit for a digit: damage the parser cannot see, which must analyse as usual.
      fc.constantFrom('0', '3', '7'),
    );
    // One such edit always runs, so that the exit-0 outcome is seen whatever the random draw:
    // the sixth character of the first row after the header, a digit of its first number
    // (even when signed: "-d.ddd").
    const firstRow = text.indexOf('\nxi,') + 1;
    const firstData = text.indexOf(0x0a, firstRow) + 1;
    const digitEdit: [number, number, string][] = [[firstData + 5, 1, '5']];
    await fc.assert(
      fc.asyncProperty(
        fc.array(fc.tuple(fc.nat({ max: text.length }), fc.nat({ max: 3 }), damage), { minLength: 1, maxLength: 3 }),
        fc.constantFrom('analyze', 'inspect'),
        async (edits, command) =>
          withInputs(async (work, inputs) => {
            let bytes = Buffer.from(text);
            for (const [at, cut, what] of edits)
              bytes = Buffer.concat([bytes.subarray(0, at), Buffer.from(what, 'latin1'), bytes.subarray(at + cut)]);
            writeFileSync(join(inputs, 'a.csv'), bytes);
            const before = snapshot(inputs);
            const r = await run([command, join(inputs, 'a.csv')]);
            kept(r, work, inputs, before, JSON.stringify(edits));
            outcomes.add(r.code);
            if (r.code === 2) expect(r.stderr).toMatch(/a\.csv/);
            // No raw control character reaches the terminal.
            expect(hasControlCharacter(r.stderr), r.stderr).toBe(false);
          }),
      ),
      { numRuns: 40, examples: [[digitEdit, 'analyze']] },
    );
    expect([...outcomes.seen].sort()).toEqual(expect.arrayContaining([0, 2]));
  });

  it('any damage to a sweep journal: the sweep gives the tables of a whole run, byte for byte', async () => {
    const lines = readFileSync(join(referenceSweep, 'journal.jsonl'), 'utf8').trimEnd().split('\n');
    const edit = fc.oneof(
      fc.record({ kind: fc.constant('cut' as const), line: fc.nat({ max: 2 }), at: fc.nat({ max: 3000 }) }),
      fc.record({
        kind: fc.constant('insert' as const),
        line: fc.nat({ max: 2 }),
        at: fc.nat({ max: 3000 }),
        text: fc.string({ maxLength: 5 }),
      }),
      fc.record({
        kind: fc.constant('value' as const),
        line: fc.nat({ max: 2 }),
        column: fc.constantFrom('ber', 'bits', 'ok', 'capture', 'snr_db', 'warnings', 'x_ber_is_upper_bound', 'input_sha256'),
        value: jsonValue,
      }),
      fc.record({ kind: fc.constant('garbage' as const), line: fc.nat({ max: 3 }), text: fc.string({ maxLength: 30 }) }),
      fc.record({ kind: fc.constant('drop' as const), line: fc.nat({ max: 2 }) }),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(edit, { minLength: 1, maxLength: 3 }), fc.boolean(), async (edits, endsWithNewline) =>
        withInputs(async (work, inputs) => {
          const journal = [...lines];
          for (const e of edits) {
            const i = Math.min(e.line, journal.length - 1);
            if (i < 0) break;
            if (e.kind === 'cut') journal[i] = journal[i].slice(0, e.at);
            else if (e.kind === 'insert') journal[i] = journal[i].slice(0, e.at) + e.text + journal[i].slice(e.at);
            else if (e.kind === 'garbage') journal.splice(e.line, 0, e.text.replaceAll('\n', ' '));
            else if (e.kind === 'drop') journal.splice(i, 1);
            else {
              try {
                const entry = JSON.parse(journal[i]);
                entry.row[e.column] = e.value;
                journal[i] = JSON.stringify(entry);
              } catch {
                // The line is already damaged.
              }
            }
          }
          const out = join(work, 'out');
          mkdirSync(out);
          writeFileSync(join(out, 'journal.jsonl'), journal.join('\n') + (endsWithNewline ? '\n' : ''));
          const before = snapshot(inputs);
          const r = await runBuiltWithin(['sweep', inputs, '--jobs', '1', '--out', out], 60_000);
          expect(r.hung).toBe(false);
          kept(r, work, inputs, before, JSON.stringify(edits));
          expect(r.code, r.stderr).toBe(0);
          for (const f of ['results.csv', 'results.arrow'])
            expect(readFileSync(join(out, f)).equals(readFileSync(join(referenceSweep, f))), f).toBe(true);
        }),
      ),
      { numRuns: 12 },
    );
  });

  it('any manifest: the sweep ends typed, naming the manifest line at fault', async () => {
    const line = fc.oneof(
      fc.constantFrom(
        'a.csv',
        'b.json',
        'c.csv',
        './a.csv',
        'missing.csv',
        '../in/a.csv',
        'a-reference.csv',
        'notes.txt',
        '/',
        '.',
      ),
      fc.constantFrom('# comment', '', '   ', '\t', 'a.csv  ', 'sub/../b.csv'),
      fc.string({ maxLength: 10 }).map((s) => s.replaceAll('\n', '')),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(line, { maxLength: 5 }), async (lines) =>
        withInputs(async (work, inputs) => {
          writeFileSync(join(inputs, 'list.txt'), lines.join('\n'));
          const before = snapshot(inputs);
          const r = await runBuiltWithin(['sweep', join(inputs, 'list.txt'), '--jobs', '1', '--out', join(work, 'out')], 60_000);
          expect(r.hung).toBe(false);
          kept(r, work, inputs, before, JSON.stringify(lines));
          if (r.code === 2) expect(r.stderr).toMatch(/list\.txt|out/);
        }),
      ),
      { numRuns: 15 },
    );
  });

  it('any scenario file: simulate ends typed, each capture written whole or not at all', async () => {
    const capture = fc.record(
      {
        name: fc.oneof(fc.constantFrom('s1', 's2', 's1-reference', 'a b', '', '../x'), fc.string({ maxLength: 6 })),
        seed: fc.oneof(fc.integer(), fc.constantFrom(1.5, -1, 'x')),
        symbols: fc.oneof(fc.integer({ min: 16, max: 600 }), fc.constantFrom(1e12, 1e7, 0, -5, 2.5, 'many')),
        samplesPerSymbol: fc.oneof(fc.constantFrom(2, 2.5, 1, 1e6, 300, 0, Number.NaN)),
        modulation: fc.constantFrom('qpsk', '16qam', '8psk'),
      },
      { requiredKeys: ['name'] },
    );
    await fc.assert(
      fc.asyncProperty(
        fc.array(capture, { maxLength: 3 }),
        fc.record(
          { symbolRate: fc.constantFrom(32e9, 1e13, -1, 0), symbols: fc.constant(64), modulation: fc.constant('qpsk') },
          { requiredKeys: [] },
        ),
        async (list, baseOptions) =>
          withInputs(async (work, inputs) => {
            writeFileSync(join(work, 's.json'), JSON.stringify({ name: 's', base: baseOptions, captures: list }));
            const before = snapshot(inputs);
            const r = await run(['simulate', join(work, 's.json'), '--out', join(work, 'out')]);
            kept(r, work, inputs, before, JSON.stringify(list));
            // Every capture present is whole: its three files.
            const files = readdirSync(work).includes('out') ? readdirSync(join(work, 'out')) : [];
            for (const f of files.filter((n) => n.endsWith('.json'))) {
              const name = f.slice(0, -'.json'.length);
              expect(files).toContain(`${name}.csv`);
              expect(files).toContain(`${name}-reference.csv`);
            }
          }),
      ),
      { numRuns: 40 },
    );
  });

  it('any damage to a shard record: the merge ends typed, writing both tables or neither', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.nat({ max: shardRecord.length }),
        fc.nat({ max: 40 }),
        fc.oneof(fc.string({ maxLength: 8 }), fc.constantFrom('null', '-1', '"x"', '1e400', '[]', '{}', '\u0000')),
        async (at, cut, what) =>
          withInputs(async (work) => {
            const dir = join(work, 'sharded');
            cpSync(join(base, 'sharded'), dir, { recursive: true });
            writeFileSync(join(dir, 'shard-0-of-1', 'shard.json'), shardRecord.slice(0, at) + what + shardRecord.slice(at + cut));
            const r = await run(['merge', dir]);
            expectTypedOutcome(r, JSON.stringify([at, cut, what]));
            // The damaged record is the input here, not an output.
            expectCompleteOutputs(work, (p) => p.endsWith('shard.json'));
            const tables = readdirSync(dir).filter((f) => f.startsWith('results.'));
            expect([[], ['results.arrow', 'results.csv']]).toContainEqual(tables.sort());
            if (r.code === 2) expect(r.stderr).toMatch(/shard|sharded/);
          }),
      ),
      { numRuns: 40 },
    );
  });
});

describe('the suite checks what it claims', () => {
  it('a stack trace or an untyped exit 2 fails the outcome check', () => {
    expect(() => expectTypedOutcome({ code: 2, stderr: 'TypeError: x\n    at f (file.js:1:2)\n' })).toThrow();
    expect(() => expectTypedOutcome({ code: 2, stderr: 'something went wrong\n' })).toThrow();
    expect(() => expectTypedOutcome({ code: 7, stderr: '' })).toThrow();
    expectTypedOutcome({ code: 2, stderr: 'a.json:3:17: field x: expected a number, received "y"\n' });
  });

  it('a temporary file left behind fails the outputs check', () => {
    const dir = mkdtempSync(join(tmpdir(), 'intradyne-property-'));
    try {
      writeFileSync(join(dir, '.results.csv.123.abcd.tmp'), 'half');
      expect(() => expectCompleteOutputs(dir)).toThrow(/temporary files/);
      rmSync(join(dir, '.results.csv.123.abcd.tmp'));
      copyFileSync(join(referenceSweep, 'results.csv'), join(dir, 'results.csv'));
      writeFileSync(join(dir, 'results.arrow'), readFileSync(join(referenceSweep, 'results.arrow')).subarray(0, 100));
      expect(() => expectCompleteOutputs(dir)).toThrow();
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
