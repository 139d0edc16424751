// The three packages as a user receives them: packed with pnpm (which
// rewrites workspace:* to versions), installed from the tarballs with npm
// into a fresh project (their registry dependencies fetched as usual), then
// imported from JavaScript (ESM) and from TypeScript, type-checked against
// the installed declarations under both node16 and bundler resolution, and
// used for a tiny analysis. Needs the built dist/ (the test command builds
// first) and the npm registry.
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const ROOT = fileURLToPath(new URL('../../../..', import.meta.url));
const TSC = join(ROOT, 'node_modules/typescript/bin/tsc');
const PACKAGES = ['core', 'metrics', 'io'] as const;

const work = mkdtempSync(join(tmpdir(), 'intradyne-packaging-'));
const tarballs = join(work, 'tarballs');
const app = join(work, 'app');

function run(command: string, args: readonly string[], cwd: string) {
  const r = spawnSync(command, args, { cwd, encoding: 'utf8', env: { ...process.env, npm_config_update_notifier: 'false' } });
  if (r.status !== 0)
    throw new Error(`${command} ${args.join(' ')} (in ${cwd}) exited with ${r.status}:\n${r.stdout}\n${r.stderr}`);
  return r.stdout;
}

const tarball = (pkg: string) => join(tarballs, `intradyne-${pkg}-0.1.0.tgz`);

// Simulated DP-QPSK at Es/N0 = 10 dB through the default receiver, the
// channels written to Arrow and read back, the reference through CSV.
const SMOKE = `
import { simulate } from '@intradyne/core';
import { analyzeCapture } from '@intradyne/metrics';
import { loadArrowCapture, loadReferenceCsv, writeCaptureArrow, writeReferenceCsv } from '@intradyne/io';

const sim = simulate({ seed: 42, modulation: 'qpsk', symbols: 12288, symbolRate: 32e9,
  channel: { esN0Db: 10, linewidthHz: 100e3, freqOffsetHz: 1e9, sop: 'random' } });
writeCaptureArrow('capture.arrow', sim.channels, { overwrite: true });
writeReferenceCsv('reference.csv', sim.reference, { overwrite: true });
const block = loadArrowCapture('capture.arrow');
const reference = loadReferenceCsv('reference.csv');
const r = analyzeCapture([block], { modulation: 'qpsk', symbolRate: 32e9, sampleRate: block.sampleRate }, reference);
console.log(JSON.stringify({ ok: r.ok, ber: r.measurement?.ber ?? null, snrDb: r.measurement?.snrDb ?? null, samples: block.xi.length }));
`;

describe('packed and installed packages', () => {
  beforeAll(() => {
    mkdirSync(tarballs);
    for (const pkg of PACKAGES)
      run('npx', ['-y', 'pnpm@12.4.2', 'pack', '--pack-destination', tarballs], join(ROOT, 'packages', pkg));
    mkdirSync(app);
    writeFileSync(join(app, 'package.json'), '{ "name": "consumer", "private": true, "type": "module" }\n');
    run('npm', ['install', '--no-audit', '--no-fund', '--prefer-offline', '--loglevel=error', ...PACKAGES.map(tarball)], app);
  }, 300_000); // a cold npm cache fetches some 250 packages
  afterAll(() => rmSync(work, { recursive: true, force: true }));

  it('ships dist, declarations and the licence, with workspace:* rewritten to versions', () => {
    for (const pkg of PACKAGES) {
      const files = run('tar', ['tzf', tarball(pkg)], work).split('\n');
      expect(files, pkg).toContain('package/dist/index.js');
      expect(files, pkg).toContain('package/dist/index.d.ts');
      expect(files, pkg).toContain('package/LICENSE');
      expect(files, pkg).toContain('package/README.md');
      expect(
        files.some((f) => f.includes('/test/') || f.endsWith('.tsbuildinfo')),
        pkg,
      ).toBe(false);
      const manifest = JSON.parse(run('tar', ['xzOf', tarball(pkg), 'package/package.json'], work));
      expect(JSON.stringify(manifest.dependencies ?? {}), pkg).not.toContain('workspace:');
    }
    expect(readFileSync(join(app, 'node_modules/@intradyne/io/dist/sweep/worker.js'), 'utf8')).toMatch(/worker/);
  });

  it('runs a tiny analysis from JavaScript (ESM)', () => {
    writeFileSync(join(app, 'smoke.mjs'), SMOKE);
    const out = JSON.parse(run(process.execPath, ['smoke.mjs'], app));
    expect(out.ok).toBe(true);
    expect(out.samples).toBe(2 * 12288);
    // DP-QPSK at Es/N0 = 10 dB: theory BER = ½·erfc(√(Es/N0 / 2)) = 7.83e-4
    // (Proakis, Gray-coded QPSK; the value from @stdlib's erfc). Over
    // ~40,000 bits, ~31 errors: a factor 2 either way covers the Poisson
    // spread (±2σ ≈ ±36 %) and the receiver's 0.1–0.3 dB penalty (README).
    expect(out.ber).toBeGreaterThan(7.83e-4 / 2);
    expect(out.ber).toBeLessThan(7.83e-4 * 2);
    // Data-aided SNR against the simulator's Es/N0, with the same margin.
    expect(out.snrDb).toBeGreaterThan(9.5);
    expect(out.snrDb).toBeLessThan(10.1);
  });

  it.each(['node16', 'bundler'])('type-checks and runs from TypeScript (moduleResolution %s)', (resolution) => {
    const dir = join(app, `ts-${resolution}`);
    mkdirSync(dir);
    writeFileSync(
      join(dir, 'smoke.ts'),
      `${SMOKE}
import { type AnalysisResult, type Measurement } from '@intradyne/metrics';
import { type ComplexArray, type Stage, pipe, viterbiViterbi } from '@intradyne/core';
import { checkBlockInvariance } from '@intradyne/core/testing';
import { InputError } from '@intradyne/io';
// Types flow through: a pipeline of symbol stages is a symbol stage.
const phase: Stage<'symbols', 'symbols', unknown> = pipe(viterbiViterbi({ modulation: 'qpsk' }));
const figures: Measurement | null = (null as AnalysisResult | null)?.measurement ?? null;
const samples: ComplexArray | null = null;
void [phase, figures, samples, checkBlockInvariance, InputError];
`,
    );
    const module = resolution === 'bundler' ? 'ESNext' : 'Node16';
    writeFileSync(
      join(dir, 'tsconfig.json'),
      JSON.stringify({
        compilerOptions: {
          target: 'ES2022',
          module,
          moduleResolution: resolution,
          strict: true,
          outDir: 'out',
          skipLibCheck: true,
          typeRoots: [join(ROOT, 'node_modules/@types')],
          types: ['node'],
        },
        files: ['smoke.ts'],
      }),
    );
    // A type error anywhere (our declarations, the exports map, the sample) fails here.
    run(process.execPath, [TSC, '-p', join(dir, 'tsconfig.json')], dir);
    writeFileSync(join(dir, 'out/package.json'), '{ "type": "module" }\n');
    const out = JSON.parse(run(process.execPath, [join(dir, 'out/smoke.js')], dir));
    expect(out.ok).toBe(true);
  });

  it('installs the intradyne command', () => {
    const help = run(join(app, 'node_modules/.bin/intradyne'), ['--help'], app);
    expect(help).toMatch(/^Usage: intradyne COMMAND/m);
  });
});
