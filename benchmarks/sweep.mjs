// A sweep of 16 captures (DP-16QAM, 2.5 samples per symbol, seeded) with
// the built `intradyne sweep` command in child processes, with --jobs 1 and
// --jobs 2: the wall time of each and the speed-up, for captures of 16,384
// and of 65,536 symbols. Every worker thread pays a fixed cost before its
// first capture runs at full speed (loading the packages, and V8 compiling
// the hot loops anew in each isolate: about 1 s of CPU on the development
// machine, against 0.17 s per 16,384-symbol capture after it), which the
// larger captures amortize. The load average before each size is printed:
// on a shared machine other processes take cores from --jobs 2. A single
// worker already uses more than one core (V8 compiles and collects garbage on
// background threads), so where `taskset` exists --jobs 1 is also run pinned
// to one CPU, and the speed-up of two cores over one is printed beside.
// Part of `npx -y pnpm@12.4.2 bench`; run after a build.
// `SWEEP_BENCH_RUNS` changes the run count (default 3).
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { machine, report, saveSection } from './harness.mjs';

const CLI = join(dirname(fileURLToPath(import.meta.url)), '..', 'packages', 'io', 'dist', 'cli', 'main.js');
const CAPTURES = 16;
const SIZES = [16384, 65536];
const RUNS = Number(process.env.SWEEP_BENCH_RUNS ?? 3);

const TASKSET = spawnSync('taskset', ['-c', '0', 'true']).status === 0;

const m = machine();
console.log(`machine: ${m.cpu} (${m.cores} cores), Node ${m.node}`);
const records = [];
const notes = [];
for (const SYMBOLS of SIZES) {
  const dir = mkdtempSync(join(tmpdir(), 'intradyne-sweep-bench-'));
  try {
    const captures = Array.from({ length: CAPTURES }, (_, i) => ({
      name: `capture-${String(i).padStart(2, '0')}`,
      seed: 100 + i,
      modulation: '16qam',
      samplesPerSymbol: 2.5,
      channel: { esN0Db: 18, sop: 'random', linewidthHz: 1e5, freqOffsetHz: 1e9, dispersionPsPerNm: 340 },
    }));
    const scenario = join(dir, 'scenario.json');
    writeFileSync(
      scenario,
      JSON.stringify({ name: 'sweep-bench', base: { symbolRate: 32e9, symbols: SYMBOLS, rollOff: 0.1 }, captures }),
    );
    const input = join(dir, 'captures');
    execFileSync(process.execPath, [CLI, 'simulate', scenario, '--out', input], { stdio: 'ignore' });
    const load = loadavg()[0];
    const medians = {};
    const variants = [
      { key: '1', jobs: 1, pinned: false },
      { key: '2', jobs: 2, pinned: false },
      ...(TASKSET ? [{ key: 'one core', jobs: 1, pinned: true }] : []),
    ];
    for (const { key, jobs, pinned } of variants) {
      const times = [];
      for (let r = 0; r < RUNS; r++) {
        const out = join(dir, `out-${key.replace(' ', '-')}-${r}`);
        const args = [CLI, 'sweep', input, '--jobs', String(jobs), '--out', out];
        const t0 = process.hrtime.bigint();
        if (pinned) execFileSync('taskset', ['-c', '0', process.execPath, ...args], { stdio: 'ignore' });
        else execFileSync(process.execPath, args, { stdio: 'ignore' });
        times.push(Number(process.hrtime.bigint() - t0) / 1e9);
      }
      const rec = report(
        `sweep of ${CAPTURES} captures of ${SYMBOLS.toLocaleString('en')} symbols, --jobs ${jobs}${pinned ? ' pinned to one CPU' : ''}`,
        { units: 'symbols', perRun: CAPTURES * SYMBOLS, params: { captures: CAPTURES, symbols: SYMBOLS, jobs, pinned } },
        times,
      );
      records.push(rec);
      medians[key] = rec.medianSeconds;
    }
    const size = `${SYMBOLS.toLocaleString('en')}-symbol captures`;
    const speedUps = [
      `--jobs 2 over --jobs 1: ${(medians['1'] / medians['2']).toFixed(2)}× (${medians['1'].toFixed(1)} s → ${medians['2'].toFixed(1)} s)`,
      ...(TASKSET
        ? [
            `two cores (--jobs 2) over one (--jobs 1 pinned): ${(medians['one core'] / medians['2']).toFixed(2)}× (${medians['one core'].toFixed(1)} s → ${medians['2'].toFixed(1)} s)`,
          ]
        : []),
    ];
    const note = `sweep speed-up, ${size}: ${speedUps.join('; ')}; wall time including start-up; load average ${load.toFixed(1)} before`;
    console.log(note);
    notes.push(note);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
saveSection('sweep', records, { notes });
