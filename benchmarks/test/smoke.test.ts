import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

// The benchmark scripts must keep running as the library changes. This runs the stage benchmark on a
// tiny size (against the built packages, as `bench` does) into a temporary folder and checks that it
// finished and recorded every stage. It never looks at a time: speed is measured by `bench`, not tested.
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
});
