// Every code sample of the guides (and of the packages' READMEs) marked `<!-- run -->` is run here, against
// the built packages (the test command builds first; alone, build with
// `npx tsc -b packages/core packages/metrics packages/io`), so that no guide
// goes stale. TypeScript samples are type-checked and compiled with the
// workspace's tsc against the packages' declarations.
import { existsSync, mkdirSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  compileTypeScript,
  documentsWithSamples,
  guideSamples,
  ROOT,
  runFile,
  type Sample,
  scratchProject,
} from './guide-samples.js';

const samples = guideSamples(documentsWithSamples());
const guides = [...new Set(samples.map((s) => s.guide))];
const EXTENSION = { ts: '.ts', js: '.mjs', sh: '.sh' } as const;

let project = '';
const files = new Map<Sample, string>();

describe('guide samples', () => {
  beforeAll(() => {
    project = scratchProject('intradyne-guides-');
    samples.forEach((s, i) => {
      const dir = join(project, s.guide.replace(/\.md$/, ''));
      mkdirSync(dir, { recursive: true });
      // A sample may run an example as from the repository root: docs/examples/….
      if (!existsSync(join(dir, 'docs'))) {
        mkdirSync(join(dir, 'docs'));
        symlinkSync(join(ROOT, 'docs/examples'), join(dir, 'docs/examples'));
      }
      const file = join(dir, `sample-${String(i).padStart(2, '0')}${EXTENSION[s.lang]}`);
      writeFileSync(file, `${s.code}\n`);
      files.set(s, s.lang === 'ts' ? file.replace(/\.ts$/, '.js') : file);
    });
    const errors = compileTypeScript(project);
    if (errors) throw new Error(`the guides' TypeScript samples do not type-check:\n${errors}`);
  });
  afterAll(() => {
    if (project) rmSync(project, { recursive: true, force: true });
  });

  it('finds runnable samples in every guide that has code', () => {
    // The guides with code samples; a guide that loses its markers fails here.
    for (const guide of [
      'getting-started.md',
      'capture-formats.md',
      'default-receiver.md',
      'pipelines.md',
      'comparing-algorithms.md',
      'sweeps.md',
      'troubleshooting.md',
      'packages-core-README.md',
      'packages-metrics-README.md',
    ]) {
      expect(guides, guide).toContain(guide);
    }
  });

  it.each(guides)('%s: every sample runs and prints what the guide says', (guide) => {
    for (const s of samples.filter((x) => x.guide === guide)) {
      const file = files.get(s)!;
      const r = runFile(file, join(project, guide.replace(/\.md$/, '')));
      const where = `${guide}:${s.line}`;
      // INTRADYNE_REPORT=1 shows what each sample printed.
      if (process.env.INTRADYNE_REPORT) console.log(`${where}\n${r.stdout}`);
      expect(r.status, `${where} exited with ${r.status}\n${r.stdout}\n${r.stderr}`).toBe(0);
      if (s.prints) expect(r.stdout, `${where}: stdout`).toMatch(s.prints);
    }
  });
});
