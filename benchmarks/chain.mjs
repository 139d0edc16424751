// The whole default receiver on DP-16QAM at 2.5 samples per symbol, from a
// capture CSV file and from an Arrow file, for 1e5 and 1e6 symbols (1e7 when
// CHAIN_BENCH_1E7=1: minutes per run and gigabytes of CSV, so not by
// default). Each analysis runs in its own child process, so its peak
// resident memory (process.resourceUsage().maxRSS at exit) is its own; the
// capture files are written by another child. Prints symbols/s, peak RSS and
// the slope of time between sizes (1.0 = linear). Part of
// `npx -y pnpm@12.4.2 bench`; run after a build.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { machine, report, saveSection } from './harness.mjs';

const median = (v) => [...v].sort((a, b) => a - b)[v.length >> 1];

const SELF = fileURLToPath(import.meta.url);
const SETTINGS = { modulation: '16qam', symbolRate: 32e9, sampleRate: 80e9, dispersionPsPerNm: 1360 };

// The transmitted pattern: PRBS15 mapped to 16QAM repeats every 2^15 − 1 = 32,767 symbols, as an
// arbitrary waveform generator loops it; the analysis gets one period as its reference (1 MB).
const PERIOD = 2 ** 15 - 1;
// 1e7 symbols are ten copies and a part of one capture of 30 periods (simulating 1e7 symbols at once
// takes several GB): its frequency offset turns the carrier by a whole number of cycles over the copy
// and it has no laser phase noise, so the copies join without a phase step. The simulator continues
// the PRBS on y after x: 1,700 symbols more are simulated (and cut off) so that y does not repeat x,
// which no equalizer could separate.
const TILE = 30 * PERIOD;
const TILE_SECONDS = TILE / 32e9;
const Y_OFFSET = 1700;

async function writeCapture(dir, n) {
  const { simulate } = await import('../packages/core/dist/index.js');
  const { writeCaptureArrow, writeCaptureCsv } = await import('../packages/io/dist/index.js');
  const tiled = n > 2e6;
  const cap = simulate({
    seed: 5,
    modulation: '16qam',
    symbols: tiled ? TILE + Y_OFFSET : n,
    symbolRate: 32e9,
    samplesPerSymbol: 2.5,
    source: { kind: 'prbs', order: 15 },
    channel: tiled
      ? { esN0Db: 18, sop: 'random', dgdPs: 10, freqOffsetHz: 30000 / TILE_SECONDS, dispersionPsPerNm: 1360 }
      : { esN0Db: 18, sop: 'random', dgdPs: 10, linewidthHz: 1e5, freqOffsetHz: 1e9, dispersionPsPerNm: 1360 },
  });
  let channels = cap.channels;
  if (tiled) {
    const samples = Math.round(n * 2.5);
    const tile = (all) => {
      const a = all.subarray(0, Math.round(TILE * 2.5));
      const out = new Float64Array(samples);
      for (let at = 0; at < samples; at += a.length) out.set(a.subarray(0, Math.min(a.length, samples - at)), at);
      return out;
    };
    const { xi, xq, yi, yq, sampleRate } = cap.channels;
    channels = { xi: tile(xi), xq: tile(xq), yi: tile(yi), yq: tile(yq), sampleRate };
  }
  writeCaptureCsv(join(dir, 'capture.csv'), channels);
  writeCaptureArrow(join(dir, 'capture.arrow'), channels);
  const x = cap.reference.x.subarray(0, 2 * PERIOD);
  const y = cap.reference.y.subarray(0, 2 * PERIOD);
  writeFileSync(
    join(dir, 'reference.bin'),
    Buffer.concat([Buffer.from(x.buffer, x.byteOffset, x.byteLength), Buffer.from(y.buffer, y.byteOffset, y.byteLength)]),
  );
}

async function analyze(path, dir) {
  const { analyzeCapture } = await import('../packages/metrics/dist/index.js');
  const { readArrowCapture, readCsvCapture } = await import('../packages/io/dist/index.js');
  const raw = readFileSync(join(dir, 'reference.bin'));
  const ref = new Float64Array(raw.buffer, raw.byteOffset, raw.byteLength / 8);
  const half = ref.length / 2;
  const reference = { x: ref.subarray(0, half), y: ref.subarray(half) };
  const t0 = process.hrtime.bigint();
  const c0 = process.cpuUsage();
  const blocks = path.endsWith('.csv')
    ? readCsvCapture(path, { sampleRate: 80e9 })
    : readArrowCapture(path, { sampleRate: 80e9 });
  const r = analyzeCapture(withSps(blocks), SETTINGS, reference);
  const seconds = Number(process.hrtime.bigint() - t0) / 1e9;
  const cpu = process.cpuUsage(c0);
  const cpuSeconds = (cpu.user + cpu.system) / 1e6;
  if (!r.ok) throw new Error(`analysis failed: ${r.reason ?? JSON.stringify(r).slice(0, 200)}`);
  const maxRssMB = process.resourceUsage().maxRSS / 1024;
  process.stdout.write(JSON.stringify({ seconds, cpuSeconds, maxRssMB, ber: r.measurement.ber }));
}

function* withSps(blocks) {
  for (const b of blocks) yield b.samplesPerSymbol ? b : { ...b, samplesPerSymbol: 2.5 };
}

async function parent() {
  const m = machine();
  console.log(`machine: ${m.cpu} (${m.cores} cores), Node ${m.node}`);
  const sizes = [1e5, 1e6];
  if (process.env.CHAIN_BENCH_1E7 === '1') sizes.push(1e7);
  const runs = Number(process.env.CHAIN_BENCH_RUNS ?? 3);
  // A 1e7-symbol analysis takes minutes: one run unless CHAIN_BENCH_RUNS_1E7 says otherwise.
  const runs1e7 = Number(process.env.CHAIN_BENCH_RUNS_1E7 ?? 1);
  const records = [];
  const notes = [];
  const medians = { csv: [], arrow: [] };
  for (const n of sizes) {
    const dir = mkdtempSync(join(tmpdir(), 'intradyne-chain-bench-'));
    try {
      execFileSync(process.execPath, [SELF, 'write', dir, String(n)], { stdio: 'inherit' });
      for (const format of ['csv', 'arrow']) {
        const out = [];
        for (let r = 0; r < (n > 2e6 ? runs1e7 : runs); r++) {
          const text = execFileSync(process.execPath, [SELF, 'analyze', join(dir, `capture.${format}`), dir], {
            encoding: 'utf8',
          });
          out.push(JSON.parse(text));
        }
        const rss = Math.max(...out.map((o) => o.maxRssMB));
        const rec = report(
          `default chain from ${format.toUpperCase()}, ${n.toExponential(0)} symbols`,
          {
            units: 'symbols',
            perRun: n,
            params: {
              symbols: n,
              format,
              modulation: '16qam',
              sps: 2.5,
              peakRssMB: rss.toFixed(0),
              // Symbols per second of CPU time (all threads, GC included): less sensitive than wall
              // time to other processes on a shared machine.
              ksymPerCpuSecond: (n / 1e3 / median(out.map((o) => o.cpuSeconds))).toFixed(0),
              ber: out[0].ber.toExponential(2),
            },
          },
          out.map((o) => o.seconds),
        );
        console.log(`${''.padEnd(48)} peak RSS ${rss.toFixed(0)} MB`);
        records.push(rec);
        medians[format].push({ n, seconds: rec.medianSeconds, rss });
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }
  for (const format of ['csv', 'arrow']) {
    const s = medians[format];
    for (let i = 1; i < s.length; i++) {
      // slope of log(time) against log(size): 1 when time grows linearly
      const slope = Math.log(s[i].seconds / s[i - 1].seconds) / Math.log(s[i].n / s[i - 1].n);
      const note = `${format.toUpperCase()}: time slope ${slope.toFixed(2)} (log–log, ${s[i - 1].n.toExponential(0)} → ${s[i].n.toExponential(0)} symbols), peak RSS ${s[i - 1].rss.toFixed(0)} → ${s[i].rss.toFixed(0)} MB`;
      console.log(note);
      notes.push(note);
    }
  }
  saveSection('chain', records, { notes });
}

const [mode, a, b] = process.argv.slice(2);
if (mode === 'write') await writeCapture(a, Number(b));
else if (mode === 'analyze') await analyze(a, b);
else await parent();
