import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { runScenario } from '../scenarios/run.js';
import { builtInScenario } from '../scenarios/scenario.js';
import { parseCommandArgs } from './args.js';

export const DEMO_HELP = `intradyne demo [--keep]

Simulates the built-in 'demo' scenario (a DP-16QAM OSNR sweep at 32 GBd) into
a temporary folder and prints a table of the captures written.

Options:
  --keep       keep the temporary folder and print its path
  -h, --help   this text
`;

export function demoCommand(argv: readonly string[], out: (s: string) => void, err: (s: string) => void): number {
  const { values } = parseCommandArgs('demo', argv, { keep: { type: 'boolean' } });
  if (values.help) {
    out(DEMO_HELP);
    return 0;
  }
  const scenario = builtInScenario('demo');
  if (!scenario) throw new Error('the built-in demo scenario is missing');
  const dir = mkdtempSync(join(tmpdir(), 'intradyne-demo-'));
  try {
    out(`${scenario.description}\n\n`);
    const written = runScenario(scenario, dir, { onCapture: (w, i, n) => err(`simulated ${i + 1}/${n}: ${w.name}\n`) });
    const rows = written.map((w) => {
      const t = w.capture.truth;
      const clipped = Math.max(t.clipped.xi, t.clipped.xq, t.clipped.yi, t.clipped.yq);
      return [
        w.name,
        w.capture.modulation,
        String(w.options.channel?.osnrDb ?? ''),
        t.esN0Db.toFixed(2),
        String(w.capture.channels.xi.length),
        `${(100 * clipped).toFixed(3)} %`,
      ];
    });
    out(table(['capture', 'format', 'OSNR dB', 'Es/N0 dB', 'samples', 'clipped (worst channel)'], rows));
    if (values.keep) out(`\ncaptures kept in ${dir}\n`);
  } finally {
    if (!values.keep) rmSync(dir, { recursive: true, force: true });
  }
  return 0;
}

/** A plain text table with right-aligned numeric columns. */
export function table(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: readonly string[]) =>
    cells.map((s, c) => (c === 0 ? s.padEnd(widths[c]) : s.padStart(widths[c]))).join('  ');
  return `${[line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n')}\n`;
}
