// The built `intradyne analyze` command against a plain numpy/scipy receiver
// of the same chain (numpy-receiver.py), on one DP-16QAM CSV capture of 2^20
// symbols at 2.5 samples per symbol with a reference as long as the capture
// (as most lab references are). Each program runs in its own process, start-up
// and CSV parsing included: wall time, CPU time and peak resident memory.
// Skipped with a note when python3 with numpy and scipy is missing.
// `VERSUS_NUMPY_SYMBOLS` changes the size, `VERSUS_NUMPY_RUNS` the runs
// (default 3 for intradyne, 1 for the numpy receiver, which takes minutes).
// Part of `npx -y pnpm@12.4.2 bench`; run after a build.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { machine, report, saveSection } from './harness.mjs';

const HERE = dirname(fileURLToPath(import.meta.url));
const CLI = join(HERE, '..', 'packages', 'io', 'dist', 'cli', 'main.js');
const SELF = fileURLToPath(import.meta.url);
const median = (v) => [...v].sort((a, b) => a - b)[v.length >> 1];

// The polarization is left unrotated: the plain receiver's CMA has no guard against both outputs
// converging to one source, which a random state sometimes gives; intradyne's figures do not depend
// on it (its tests cover random states).
async function writeCapture(dir, n) {
  const { simulate } = await import('../packages/core/dist/index.js');
  const { writeCaptureCsv, writeReferenceCsv, writeJsonAtomic } = await import('../packages/io/dist/index.js');
  const cap = simulate({
    seed: 9,
    modulation: '16qam',
    symbols: n,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    channel: { esN0Db: 18, sop: 'identity', linewidthHz: 1e5, freqOffsetHz: 1e9, dispersionPsPerNm: 1360 },
  });
  writeCaptureCsv(join(dir, 'capture.csv'), cap.channels);
  writeReferenceCsv(join(dir, 'reference.csv'), cap.reference);
  writeJsonAtomic(join(dir, 'capture.json'), {
    sampleRate: 80e9,
    symbolRate: 32e9,
    modulation: '16qam',
    reference: 'reference.csv',
    dispersionPsPerNm: 1360,
  });
}

function hasNumpy() {
  const r = spawnSync('python3', ['-c', 'import numpy, scipy'], { encoding: 'utf8' });
  return r.status === 0;
}

/** Wall and CPU seconds and peak RSS of one `intradyne analyze` process (read from the process itself at exit). */
function runIntradyne(capture) {
  const onExit =
    "process.on('exit',()=>{const u=process.resourceUsage();" +
    "process.stderr.write('\\nbench '+JSON.stringify({cpu:(u.userCPUTime+u.systemCPUTime)/1e6,rss:u.maxRSS/1024})+'\\n')})";
  const t0 = process.hrtime.bigint();
  const r = spawnSync(
    process.execPath,
    ['--import', `data:text/javascript,${encodeURIComponent(onExit)}`, CLI, 'analyze', capture, '--json'],
    {
      encoding: 'utf8',
      maxBuffer: 1 << 26,
    },
  );
  const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`intradyne analyze exited ${r.status}: ${r.stderr}`);
  const line = r.stderr.split('\n').find((l) => l.startsWith('bench '));
  const { cpu, rss } = JSON.parse(line.slice(6));
  return { seconds, cpuSeconds: cpu, maxRssMB: rss, ber: JSON.parse(r.stdout).ber };
}

/** The same for the numpy receiver; it reports its own step times and peak RSS. */
function runNumpy(capture) {
  const t0 = process.hrtime.bigint();
  const r = spawnSync('python3', [join(HERE, 'numpy-receiver.py'), capture], { encoding: 'utf8', maxBuffer: 1 << 24 });
  const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
  if (r.status !== 0) throw new Error(`numpy-receiver.py exited ${r.status}: ${r.stderr}`);
  const out = JSON.parse(r.stdout.trim().split('\n').pop());
  return { seconds, cpuSeconds: out.cpuSeconds, maxRssMB: out.maxRssMB, ber: out.ber, steps: out.seconds };
}

async function parent() {
  const m = machine();
  console.log(`machine: ${m.cpu} (${m.cores} cores), Node ${m.node}`);
  if (!hasNumpy()) {
    const note = 'skipped: python3 with numpy and scipy is not installed';
    console.log(note);
    saveSection('versus-numpy', [], { notes: [note] });
    return;
  }
  const n = Number(process.env.VERSUS_NUMPY_SYMBOLS ?? 2 ** 20);
  const runs = Number(process.env.VERSUS_NUMPY_RUNS ?? 3);
  const dir = mkdtempSync(join(tmpdir(), 'intradyne-versus-numpy-'));
  try {
    execFileSync(process.execPath, [SELF, 'write', dir, String(n)], { stdio: 'inherit' });
    const capture = join(dir, 'capture.csv');
    const ours = [];
    for (let r = 0; r < runs; r++) ours.push(runIntradyne(capture));
    const theirs = [runNumpy(capture)];
    const records = [];
    for (const [label, out] of [
      ['intradyne analyze', ours],
      ['numpy/scipy receiver', theirs],
    ]) {
      const rss = Math.max(...out.map((o) => o.maxRssMB));
      records.push(
        report(
          `${label}, CSV, ${n} symbols, full-length reference`,
          {
            units: 'symbols',
            perRun: n,
            params: {
              symbols: n,
              peakRssMB: rss.toFixed(0),
              cpuSeconds: median(out.map((o) => o.cpuSeconds)).toFixed(1),
              ber: out[0].ber.toExponential(2),
            },
          },
          out.map((o) => o.seconds),
        ),
      );
      console.log(`${''.padEnd(48)} peak RSS ${rss.toFixed(0)} MB`);
    }
    const ratio = records[1].medianSeconds / records[0].medianSeconds;
    const steps = Object.entries(theirs[0].steps)
      .map(([k, v]) => `${k} ${v.toFixed(1)} s`)
      .join(', ');
    const notes = [
      `intradyne analyze is ${ratio.toFixed(1)}× faster end to end (wall time, start-up and CSV parsing included)`,
      `numpy/scipy receiver steps: ${steps}`,
    ];
    for (const note of notes) console.log(note);
    saveSection('versus-numpy', records, { notes });
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

const [mode, a, b] = process.argv.slice(2);
if (mode === 'write') await writeCapture(a, Number(b));
else await parent();
