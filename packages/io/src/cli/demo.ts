import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { analyzeFile } from '../analysis/analyze-file.js';
import { outputFailure } from '../errors/file-system.js';
import { figureColumns, textNumber } from '../figures/figure-table.js';
import { runScenario } from '../scenarios/run.js';
import { builtInScenario } from '../scenarios/scenario.js';
import { parseCommandArgs } from './args.js';

export const DEMO_HELP = `intradyne demo [--keep]

Simulates the built-in 'demo' scenario (a DP-16QAM OSNR sweep at 32 GBd
through 80 km of fibre, captured at 80 GSa/s) into a temporary folder,
analyses every capture with the default receiver and prints the results.

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
  let dir: string;
  try {
    dir = mkdtempSync(join(tmpdir(), 'intradyne-demo-'));
  } catch (e) {
    throw outputFailure(e, tmpdir(), 'temporary folder', 'a writable folder for the demo (set TMPDIR to another)');
  }
  let failed = 0;
  try {
    out(`${scenario.description}\n\n`);
    const written = runScenario(scenario, dir, { onCapture: (w, i, n) => err(`simulated ${i + 1}/${n}: ${w.name}\n`) });
    const figures = figureColumns('BER', '95 % interval', 'SNR dB', 'GMI b', 'NGMI');
    const rows = written.map((w, i) => {
      err(`analysing ${i + 1}/${written.length}: ${w.name}\n`);
      const { result } = analyzeFile(w.data);
      const osnr = String(w.options.channel?.osnrDb ?? '');
      if (!result.ok) {
        failed++;
        return [w.name, osnr, `failed: ${result.failure?.check}`, ...figures.slice(1).map(() => ''), '', ''];
      }
      const m = result.measurement;
      if (m === null) throw new Error('a measured analysis without its measurement');
      return [
        w.name,
        osnr,
        ...figures.map((c) => c.cell(m, textNumber)),
        textNumber(result.freqOffsetHz / 1e9, 3),
        textNumber(result.diagnostics.dispersion.dispersionPsPerNm, 0),
      ];
    });
    out(table(['capture', 'OSNR dB', ...figures.map((c) => c.heading), 'offset GHz', 'CD ps/nm'], rows));
    out(
      '\nBER pre-FEC with its exact (Clopper–Pearson) 95 % interval, "< x" when no error was seen; ' +
        'SNR data-aided (Es/N0); GMI in bits per symbol and polarization.\n',
    );
    if (values.keep) out(`captures kept in ${dir}\n`);
  } finally {
    if (!values.keep) rmSync(dir, { recursive: true, force: true });
  }
  return failed === 0 ? 0 : 1;
}

/** A plain text table with right-aligned numeric columns. */
export function table(header: readonly string[], rows: readonly (readonly string[])[]): string {
  const widths = header.map((h, c) => Math.max(h.length, ...rows.map((r) => r[c].length)));
  const line = (cells: readonly string[]) =>
    cells.map((s, c) => (c === 0 ? s.padEnd(widths[c]) : s.padStart(widths[c]))).join('  ');
  return `${[line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)].join('\n')}\n`;
}
