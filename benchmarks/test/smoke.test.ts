import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

// The benchmark scripts must keep running as the library changes. This runs the stage benchmark, the
// chain profile and the numpy comparison on tiny sizes (against the built packages, as `bench` does)
// into a temporary folder and checks that they finished and recorded what they measure. It never looks at a time: speed is measured by `bench`, not tested.
const HERE = dirname(fileURLToPath(import.meta.url));
const out = mkdtempSync(join(tmpdir(), 'intradyne-bench-smoke-'));
afterAll(() => rmSync(out, { recursive: true, force: true }));

describe('benchmarks', () => {
  it('stages.mjs runs on 32,768 symbols and records every stage', () => {
    const r = spawnSync(process.execPath, [join(HERE, '..', 'stages.mjs')], {
      env: { ...process.env, STAGE_BENCH_SYMBOLS: '32768', BENCH_RESULTS_DIR: out },
      encoding: 'utf8',
    });
    expect(r.status, r.stderr).toBe(0);
    const results = JSON.parse(readFileSync(join(out, 'results.json'), 'utf8'));
    const labels = results.sections.stages.records.map((x: { label: string }) => x.label);
    for (const stage of [
      '2×2 equalizer, CMA',
      'BPS, both polarizations',
      'sync + metrics (measure)',
      'Arrow load (readArrowCapture)',
    ])
      expect(labels).toContain(stage);
    expect(readFileSync(join(out, 'README.md'), 'utf8')).toContain('bench-results:start');
  });

  it('profile.mjs runs on 32,768 symbols and records every stage of the chain and the measurement', () => {
    const r = spawnSync(process.execPath, [join(HERE, '..', 'profile.mjs')], {
      env: { ...process.env, PROFILE_BENCH_SYMBOLS: '32768', BENCH_RESULTS_DIR: out },
      encoding: 'utf8',
    });
    expect(r.status, r.stderr).toBe(0);
    const notes: string[] = JSON.parse(readFileSync(join(out, 'results.json'), 'utf8')).sections.profile.notes;
    for (const stage of ['resample', 'dispersion', 'timing', 'equalizer', 'phase', 'measurement', 'total'])
      expect(notes.some((n) => n.startsWith(`${stage} `))).toBe(true);
  });

  it('versus-numpy.mjs runs on 16,384 symbols, or says it skipped without numpy', () => {
    const r = spawnSync(process.execPath, [join(HERE, '..', 'versus-numpy.mjs')], {
      env: { ...process.env, VERSUS_NUMPY_SYMBOLS: '16384', VERSUS_NUMPY_RUNS: '1', BENCH_RESULTS_DIR: out },
      encoding: 'utf8',
    });
    expect(r.status, r.stderr).toBe(0);
    const section = JSON.parse(readFileSync(join(out, 'results.json'), 'utf8')).sections['versus-numpy'];
    if (section.records.length === 0) expect(section.notes[0]).toMatch(/skipped/);
    else
      expect(section.records.map((x: { label: string }) => x.label.split(',')[0])).toEqual([
        'intradyne analyze',
        'numpy/scipy receiver',
      ]);
  });
});
