import { copyFileSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { analyzeFile, type FileAnalysis } from '../../src/analysis/analyze-file.js';
import { rowFromAnalysis, rowFromError, type SweepRow } from '../../src/sweep/result-row.js';
import { FIXTURES } from './temp.js';

/** A capture name made of markup: if the report ever wrote it raw, the browser would run it. */
export const HOSTILE_NAME = '<img src=x onerror="window.__pwned=1">';
/** Descriptor notes made of markup. */
export const HOSTILE_NOTES = '<script>window.__pwned=2</script><b id="injected">bold</b>';

/**
 * The 16QAM fixture copied into `dir` under {@link HOSTILE_NAME}, its
 * descriptor given {@link HOSTILE_NOTES}, and analysed with the report's plot data.
 */
export function hostileAnalysis(dir: string): FileAnalysis {
  const data = join(dir, `${HOSTILE_NAME}.csv`);
  copyFileSync(join(FIXTURES, '16qam-scope.csv'), data);
  copyFileSync(join(FIXTURES, '16qam-scope-reference.csv'), join(dir, '16qam-scope-reference.csv'));
  const descriptor = JSON.parse(readFileSync(join(FIXTURES, '16qam-scope.json'), 'utf8'));
  writeFileSync(join(dir, `${HOSTILE_NAME}.json`), JSON.stringify({ ...descriptor, notes: HOSTILE_NOTES }));
  return analyzeFile(data, { analysis: { plotData: true } });
}

/** Results rows of the three fixture captures (QPSK, 16QAM, 64QAM) and one failed row named with markup. */
export function fixtureRows(): SweepRow[] {
  const rows = ['qpsk-clean', '16qam-scope', '64qam-time-column'].map((name) =>
    rowFromAnalysis(`${name}.csv`, analyzeFile(join(FIXTURES, `${name}.csv`)), 'f'.repeat(64)),
  );
  rows.push(rowFromError(`${HOSTILE_NAME}.csv`, 'input', `${HOSTILE_NOTES}: not a capture`, null));
  return rows;
}
