// Shared measuring helpers for the benchmark scripts: the median of several
// timed runs with the slowest and fastest run, the parameters beside each
// figure, the machine, and the results file and README table they feed.
import { existsSync, readFileSync, renameSync, writeFileSync } from 'node:fs';
import { cpus, totalmem } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const HERE = dirname(fileURLToPath(import.meta.url));
// BENCH_RESULTS_DIR sends results.json and the table elsewhere (the smoke test's temporary folder),
// so that a trial run leaves the committed results alone.
const OUT = process.env.BENCH_RESULTS_DIR ?? HERE;
export const RESULTS_PATH = join(OUT, 'results.json');
export const README_PATH = join(OUT, 'README.md');
const START = '<!-- bench-results:start -->';
const END = '<!-- bench-results:end -->';

/** The machine the figures were measured on. */
export function machine() {
  const c = cpus();
  return {
    cpu: c[0]?.model ?? 'unknown CPU',
    cores: c.length,
    memoryGB: Number((totalmem() / 2 ** 30).toFixed(1)),
    node: process.version,
    platform: `${process.platform}-${process.arch}`,
  };
}

/** Seconds taken by one call of fn. */
export function timeOnce(fn) {
  const t0 = process.hrtime.bigint();
  fn();
  return Number(process.hrtime.bigint() - t0) / 1e9;
}

/**
 * Times fn `runs` times after one warm-up call and prints the median rate of
 * `perRun` units per second with the (slowest–fastest) spread and the params.
 * `prepare`, when given, runs before every call outside the timing (fresh
 * stage state). Returns the record stored in results.json.
 */
export function bench(label, { units, perRun, params = {}, runs = 5, scale = 1e6, prefix = 'M', prepare }, fn) {
  const call = () => {
    const arg = prepare ? prepare() : undefined;
    const t0 = process.hrtime.bigint();
    fn(arg);
    return Number(process.hrtime.bigint() - t0) / 1e9;
  };
  call(); // warm-up: plans, JIT
  const times = [];
  for (let r = 0; r < runs; r++) times.push(call());
  return report(label, { units, perRun, params, scale, prefix }, times);
}

/** Prints and returns a record from measured run times (seconds). */
export function report(label, { units, perRun, params = {}, scale = 1e6, prefix = 'M' }, times) {
  const sorted = [...times].sort((a, b) => a - b);
  const median = sorted[Math.floor(sorted.length / 2)];
  const rate = (s) => perRun / s;
  const rec = {
    label,
    units: `${units}/s`,
    median: rate(median),
    min: rate(sorted.at(-1)),
    max: rate(sorted[0]),
    runs: sorted.length,
    medianSeconds: median,
    params,
  };
  const f = (v) => (v / scale).toFixed(2);
  console.log(
    `${label.padEnd(48)} ${f(rec.median).padStart(9)} ${prefix}${units}/s  (${f(rec.min)}–${f(rec.max)})  ${formatParams(params)}`,
  );
  return rec;
}

export function formatParams(params) {
  return Object.entries(params)
    .map(([k, v]) => `${k}=${v}`)
    .join(', ');
}

/** Writes text to path through a temporary file and a rename (never half-written). */
export function writeAtomic(path, text) {
  const tmp = `${path}.${process.pid}.tmp`;
  writeFileSync(tmp, text);
  renameSync(tmp, path);
}

/**
 * Stores one script's records under `section` in results.json (other
 * sections kept), then rewrites the table between the README markers.
 */
export function saveSection(section, records, extra = {}) {
  let all = { sections: {} };
  try {
    all = JSON.parse(readFileSync(RESULTS_PATH, 'utf8'));
  } catch {
    // first run: no results yet
  }
  all.machine = machine();
  all.sections = all.sections ?? {};
  all.sections[section] = { date: new Date().toISOString(), records, ...extra };
  writeAtomic(RESULTS_PATH, `${JSON.stringify(all, null, 2)}\n`);
  writeReadmeTable(all);
}

function fmt(v) {
  if (v >= 1e6) return `${(v / 1e6).toFixed(2)} M`;
  if (v >= 1e3) return `${(v / 1e3).toFixed(1)} k`;
  return `${v.toPrecision(3)} `;
}

function writeReadmeTable(all) {
  const m = all.machine;
  const rows = [['section', 'measurement', 'median', 'spread', 'runs', 'parameters']];
  for (const [name, sec] of Object.entries(all.sections)) {
    for (const r of sec.records) {
      rows.push([
        name,
        r.label,
        `${fmt(r.median)}${r.units}`,
        `${fmt(r.min).trim()}–${fmt(r.max)}${r.units}`,
        String(r.runs),
        formatParams(r.params),
      ]);
    }
    for (const note of sec.notes ?? []) rows.push([name, note, '', '', '', '']);
  }
  // Padded columns, as the formatter (biome) writes markdown tables.
  const widths = rows[0].map((_, c) => Math.max(3, ...rows.map((row) => row[c].length)));
  const line = (cells) => `| ${cells.map((v, c) => v.padEnd(widths[c])).join(' | ')} |`;
  const lines = [
    START,
    `Measured on ${m.cpu} (${m.cores} cores, ${m.memoryGB} GB), Node ${m.node}, ${m.platform}. Median of the runs, (slowest–fastest) beside it.`,
    '',
    line(rows[0]),
    line(widths.map((w) => '-'.repeat(w))),
    ...rows.slice(1).map(line),
  ];
  lines.push(END);
  const text = existsSync(README_PATH) ? readFileSync(README_PATH, 'utf8') : '# Benchmarks\n';
  const a = text.indexOf(START);
  const b = text.indexOf(END);
  const next =
    a >= 0 && b > a
      ? `${text.slice(0, a)}${lines.join('\n')}${text.slice(b + END.length)}`
      : `${text.trimEnd()}\n\n## Latest results\n\n${lines.join('\n')}\n`;
  writeAtomic(README_PATH, next);
}
