import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyzeFile } from '../../src/analysis/analyze-file.js';
import { analysisReport } from '../../src/report/analysis-report.js';
import { FIXTURES } from '../support/temp.js';

describe('the analysis page', () => {
  it('of a failed analysis says which check failed and why, and draws what it has', () => {
    // Leaving out more symbols than the capture holds fails the 'length' check.
    const a = analyzeFile(join(FIXTURES, 'qpsk-clean.csv'), { analysis: { skipSymbols: 1_000_000, plotData: true } });
    expect(a.result.ok).toBe(false);
    const html = analysisReport(a);
    expect(html).toContain('failed: length');
    expect(html).toContain('The analysis failed (length)');
    expect(html).toContain('No constellation density in this analysis.');
    // The stages ran: their pictures are there.
    for (const kind of ['taps', 'convergence', 'separation', 'phase', 'spectrum']) expect(html).toContain(`data-plot="${kind}"`);
  });

  it('without plot data leaves the density and spectrum out, saying so', () => {
    const html = analysisReport(analyzeFile(join(FIXTURES, 'qpsk-clean.csv')));
    expect(html).toContain('No constellation density in this analysis.');
    expect(html).toContain('No input spectrum in this analysis.');
    expect(html).toContain('data-plot="taps"');
  });
});
