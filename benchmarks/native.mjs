// The scalar C references (benchmarks/native/*.c) of the 2×2 CMA equalizer
// and of BPS: compiled with the system gcc -O3 -march=native into
// native/build/ when gcc is present, run on the same data as the TypeScript
// stages (written to a temporary binary file), and the TypeScript/C ratio
// printed. Each is also compiled a second time with -fno-tree-vectorize: gcc
// turns the plain loops into SIMD code (AVX2/AVX-512) on its own, which V8
// never does, and the second figure shows how much of the gap that is.
// A benchmark reference only; the library never uses them.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const HERE = join(dirname(fileURLToPath(import.meta.url)), 'native');
const BUILD = join(HERE, 'build');

function compile(name, vectorize) {
  mkdirSync(BUILD, { recursive: true });
  const out = join(BUILD, vectorize ? name : `${name}-novec`);
  const flags = ['-O3', '-march=native', ...(vectorize ? [] : ['-fno-tree-vectorize'])];
  execFileSync('gcc', [...flags, '-o', out, join(HERE, `${name}.c`), '-lm'], { stdio: 'inherit' });
  return out;
}

// int64 n, then x and y interleaved re/im (the layout the C programs read).
function writeInput(path, block) {
  const n = block.x.length / 2;
  const head = new BigInt64Array([BigInt(n)]);
  writeFileSync(
    path,
    Buffer.concat([
      Buffer.from(head.buffer),
      Buffer.from(block.x.buffer, block.x.byteOffset, block.x.byteLength),
      Buffer.from(block.y.buffer, block.y.byteOffset, block.y.byteLength),
    ]),
  );
}

function runC(exe, args) {
  const [median, min, max] = execFileSync(exe, args, { encoding: 'utf8' }).trim().split(/\s+/).map(Number);
  return { median, min, max };
}

/**
 * Runs both references and appends their records (and the ratios) to
 * `records`. Returns notes for the README table.
 */
export function runNative(dir, { twoSps, freqDone, records, runs }) {
  if (spawnSync('gcc', ['--version']).status !== 0) {
    const note = 'gcc not found: the scalar C references were skipped';
    console.log(note);
    return { notes: [note] };
  }
  const notes = [];
  const pairs = [
    {
      name: 'equalizer',
      label: 'scalar C: 2×2 butterfly, CMA',
      ts: '2×2 equalizer, CMA, no passes over the start (the work of the C)',
      input: twoSps,
      args: ['15', '3e-4', '1.32', String(runs)],
      params: { taps: 15, sps: 2, mu: 3e-4, R2: 1.32 },
    },
    {
      name: 'bps',
      label: 'scalar C: BPS, both polarizations',
      ts: 'BPS, both polarizations',
      input: freqDone,
      args: ['32', '16', String(runs)],
      params: { testPhases: 32, halfWindow: 16 },
    },
  ];
  for (const p of pairs) {
    const file = join(dir, `${p.name}.bin`);
    writeInput(file, p.input);
    const ts = records.find((x) => x.label === p.ts);
    for (const vectorize of [true, false]) {
      const r = runC(compile(p.name, vectorize), [file, ...p.args]);
      const label = vectorize ? p.label : `${p.label}, not vectorized (-fno-tree-vectorize)`;
      const rec = {
        label,
        units: 'symbols/s',
        ...r,
        runs,
        params: { symbols: p.input.x.length / 2 / (p.name === 'equalizer' ? 2 : 1), ...p.params },
      };
      const ratio = ts.median / r.median;
      rec.params.tsOverC = ratio.toFixed(2);
      records.push(rec);
      const f = (v) => (v / 1e6).toFixed(2);
      console.log(
        `${label.padEnd(48)} ${f(r.median).padStart(9)} Msymbols/s  (${f(r.min)}–${f(r.max)})  TypeScript/C = ${ratio.toFixed(2)}`,
      );
      notes.push(`TypeScript/C${vectorize ? '' : ' (not vectorized)'}, ${p.ts}: ${ratio.toFixed(2)}`);
    }
  }
  return { notes };
}
