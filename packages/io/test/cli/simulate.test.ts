import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runMainSync } from '../support/run-cli.js';
import { tempDir } from '../support/temp.js';

const run = runMainSync;

describe('intradyne command', () => {
  it('prints help with the commands and exit codes', () => {
    const r = run(['--help']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/simulate/);
    expect(r.stdout).toMatch(/Exit codes: 0 done, 1 the analysis failed, 2 bad usage or bad input/);
    expect(run(['simulate', '--help']).stdout).toMatch(/--out DIR/);
  });

  it('exits 2 with a message on bad usage', () => {
    expect(run(['frobnicate']).code).toBe(2);
    const r = run(['simulate', 'qpsk-b2b']);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/--out DIR is required/);
    expect(run(['simulate', 'qpsk-b2b', '--out', tempDir(), '--symbols=-3']).stderr).toMatch(/--symbols expected a positive/);
    expect(run(['simulate', 'qpsk-b2b', '--bogus']).stderr).toMatch(/Unknown option/);
  });

  it('writes each capture with its descriptor and reference, and refuses to overwrite', () => {
    const dir = tempDir();
    const r = run(['simulate', 'qpsk-b2b', '--out', dir, '--symbols', '512', '--json']);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(report.captures).toHaveLength(4);
    const files = readdirSync(dir).sort();
    expect(files).toContain('esn0-8db.csv');
    expect(files).toContain('esn0-8db.json');
    expect(files).toContain('esn0-8db-reference.csv');
    // No temporary file is left behind by the atomic writes.
    expect(files.filter((f) => f.endsWith('.tmp'))).toEqual([]);
    const descriptor = JSON.parse(readFileSync(join(dir, 'esn0-8db.json'), 'utf8'));
    expect(descriptor).toMatchObject({
      sampleRate: 64e9,
      symbolRate: 32e9,
      modulation: 'qpsk',
      reference: 'esn0-8db-reference.csv',
    });
    const csv = readFileSync(join(dir, 'esn0-8db.csv'), 'utf8').split('\n');
    const header = csv.findIndex((l) => !l.startsWith('#'));
    expect(csv[header]).toBe('xi,xq,yi,yq');
    // 512 symbols at 2 samples per symbol, one row each, and a final newline.
    expect(csv.length - header - 2).toBe(1024);
    const ref = readFileSync(join(dir, 'esn0-8db-reference.csv'), 'utf8').split('\n');
    expect(ref.filter((l) => l && !l.startsWith('#'))).toHaveLength(513);
    const again = run(['simulate', 'qpsk-b2b', '--out', dir, '--symbols', '512']);
    expect(again.code).toBe(2);
    expect(again.stderr).toMatch(/already exists; refusing to overwrite/);
  });

  it('reads a scenario file and reports its mistakes precisely', () => {
    const dir = tempDir();
    const file = join(dir, 'lab.json');
    writeFileSync(
      file,
      JSON.stringify({
        name: 'lab',
        base: { symbolRate: 28e9, modulation: 'qpsk', symbols: 256 },
        captures: [{ name: 'a', seed: 1 }],
      }),
    );
    expect(run(['simulate', file, '--out', join(dir, 'out')]).code).toBe(0);
    writeFileSync(
      file,
      JSON.stringify({
        name: 'lab',
        base: { symbolRate: 28e9, modulation: 'qpsk', symbols: 256, rollOff: 2 },
        captures: [{ name: 'a', seed: 1 }],
      }),
    );
    const bad = run(['simulate', file, '--out', join(dir, 'out2')]);
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/rollOff' expected a roll-off in \(0, 1\], received 2/);
    writeFileSync(file, '{ "name": ');
    expect(run(['simulate', file, '--out', dir]).stderr).toMatch(
      /lab\.json:1:11: JSON syntax: expected a JSON value .*, received the end of the file/,
    );
  });
});

describe('intradyne demo', () => {
  it('simulates and analyses the demo sweep, one row per capture with valid figures', () => {
    const r = run(['demo']);
    expect(r.code).toBe(0);
    const rows = r.stdout.split('\n').filter((l) => /^osnr-\d+db/.test(l));
    expect(rows).toHaveLength(5);
    // 16QAM at OSNR 18 dB is Es/N0 13.92 dB at 32 GBd (Essiambre et al. 2010): theory BER about 1e-2
    // (Cho & Yoon 2002); the demo's receiver must land in the same decade.
    const ber18 = Number(rows[0].trim().split(/\s+/)[2]);
    expect(ber18).toBeGreaterThan(3e-3);
    expect(ber18).toBeLessThan(3e-2);
    expect(r.stdout).not.toMatch(/failed/);
  });
});
