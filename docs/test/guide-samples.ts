// Shared by the guide-sample and example tests: a scratch project whose
// node_modules points at the built workspace packages, so that a sample
// imports '@intradyne/core' exactly as a user's script does.
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readdirSync, readFileSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const ROOT = fileURLToPath(new URL('../..', import.meta.url));
export const CLI = join(ROOT, 'packages/io/dist/cli/main.js');
const TSC = join(ROOT, 'node_modules/typescript/bin/tsc');

/** A fenced code block of a guide marked to be run. */
export interface Sample {
  /** The guide's file name, e.g. 'getting-started.md'. */
  readonly guide: string;
  /** 1-based line of the opening fence. */
  readonly line: number;
  readonly lang: 'ts' | 'js' | 'sh';
  readonly code: string;
  /** What stdout must match, when the marker says `prints /…/`. */
  readonly prints: RegExp | null;
}

/**
 * The marker is an HTML comment on the line before the fence, invisible
 * when the guide is rendered:
 *   <!-- run -->                      run it, expect exit code 0
 *   <!-- run: prints /BER \d/ -->     and stdout must match the regular expression
 * The blocks of one guide run in order in one folder, so that a later block
 * can read what an earlier one wrote.
 */
const MARKER = /^<!-- run(?::\s*prints\s+\/(.+)\/([a-z]*))?\s*-->$/;

/** The guides (docs/*.md) and the packages' READMEs, relative to the repository root. */
export function documentsWithSamples(): string[] {
  const guides = readdirSync(join(ROOT, 'docs'))
    .filter((f) => f.endsWith('.md'))
    .map((f) => `docs/${f}`);
  return [...guides.sort(), ...['core', 'metrics', 'io'].map((p) => `packages/${p}/README.md`)];
}

/** The marked samples of the given documents; `guide` names each by its path with '/' turned to '-'. */
export function guideSamples(documents: readonly string[]): Sample[] {
  const samples: Sample[] = [];
  for (const path of documents) {
    const file = path.replace(/^docs\//, '').replace(/\//g, '-');
    const lines = readFileSync(join(ROOT, path), 'utf8').split('\n');
    for (let i = 0; i < lines.length; i++) {
      const m = MARKER.exec(lines[i].trim());
      if (!m) continue;
      const fence = /^```(ts|js|sh)\s*$/.exec(lines[i + 1] ?? '');
      if (!fence) throw new Error(`${file}:${i + 1}: a run marker must sit right above a \`\`\`ts, \`\`\`js or \`\`\`sh fence`);
      const end = lines.findIndex((l, k) => k > i + 1 && l.startsWith('```'));
      if (end < 0) throw new Error(`${file}:${i + 2}: unclosed fence`);
      samples.push({
        guide: file,
        line: i + 2,
        lang: fence[1] as Sample['lang'],
        code: lines.slice(i + 2, end).join('\n'),
        prints: m[1] === undefined ? null : new RegExp(m[1], m[2]),
      });
      i = end;
    }
  }
  return samples;
}

/** A temporary project with @intradyne/{core,metrics,io} linked to the workspace packages. */
export function scratchProject(prefix: string): string {
  const dir = mkdtempSync(join(tmpdir(), prefix));
  mkdirSync(join(dir, 'node_modules/@intradyne'), { recursive: true });
  for (const pkg of ['core', 'metrics', 'io'])
    symlinkSync(join(ROOT, 'packages', pkg), join(dir, 'node_modules/@intradyne', pkg));
  writeFileSync(join(dir, 'package.json'), '{ "type": "module", "private": true }\n');
  writeFileSync(
    join(dir, 'tsconfig.json'),
    `${JSON.stringify(
      {
        compilerOptions: {
          target: 'ES2022',
          lib: ['ES2022'],
          module: 'NodeNext',
          moduleResolution: 'NodeNext',
          strict: true,
          skipLibCheck: true,
          typeRoots: [join(ROOT, 'node_modules/@types')],
          types: ['node'],
        },
        include: ['**/*.ts'],
        exclude: ['**/node_modules', '*/docs'],
      },
      null,
      2,
    )}\n`,
  );
  return dir;
}

/** Type-checks and compiles every .ts file of a scratch project to .js beside it; returns tsc's output on failure. */
export function compileTypeScript(dir: string): string | null {
  const r = spawnSync(process.execPath, [TSC, '-p', join(dir, 'tsconfig.json')], { encoding: 'utf8' });
  return r.status === 0 ? null : `${r.stdout}${r.stderr}`;
}

/** Result of running one sample. */
export interface RunResult {
  readonly status: number | null;
  readonly stdout: string;
  readonly stderr: string;
}

/** Runs a file with node (or bash for .sh, where `intradyne` is the built command) in `cwd`. */
export function runFile(file: string, cwd: string, args: readonly string[] = [], env: NodeJS.ProcessEnv = {}): RunResult {
  const sh = file.endsWith('.sh');
  const r = sh
    ? spawnSync('bash', ['-euo', 'pipefail', '-c', `intradyne() { node '${CLI}' "$@"; }\n. '${basename(file)}'`], {
        cwd,
        encoding: 'utf8',
        env: { ...process.env, ...env },
      })
    : spawnSync(process.execPath, [file, ...args], { cwd, encoding: 'utf8', env: { ...process.env, ...env } });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}
