import type { EqualizerDiagnostics } from '@intradyne/core';
import { beforeAll, describe, expect, it } from 'vitest';
import type { FileAnalysis } from '../../src/analysis/analyze-file.js';
import { frequencyTrackPlot } from '../../src/report/carrier-plot.js';
import { densityPlot } from '../../src/report/density-plot.js';
import { tapsPlot } from '../../src/report/equalizer-plots.js';
import { linePlot } from '../../src/report/line-plot.js';
import { berPlot, informationPlots } from '../../src/report/sweep-plots.js';
import { sweepPoint } from '../../src/report/sweep-report.js';
import { rampColour, THEME } from '../../src/report/theme.js';
import type { SweepRow } from '../../src/sweep/result-row.js';
import { fixtureRows, hostileAnalysis } from '../support/report-inputs.js';
import { tempDir } from '../support/temp.js';

const count = (svg: string, pattern: RegExp) => svg.match(pattern)?.length ?? 0;

describe('plot marks', () => {
  let analysis: FileAnalysis;
  let rows: SweepRow[];
  beforeAll(() => {
    analysis = hostileAnalysis(tempDir());
    rows = fixtureRows();
  });

  it('a density plot has one cell per occupied grid cell and the M ideal points', () => {
    const h = analysis.result.plotData!.constellation;
    // The density counts exactly the symbols the figures measure (8,192-symbol fixture less the 2048 + 128 left out).
    expect(h.counted).toBe(analysis.result.measurement!.perPol.x.symbols);
    for (const pol of ['x', 'y'] as const) {
      const svg = densityPlot(h, pol, 1);
      expect(count(svg, /class="cell"/g)).toBe(h[pol].filter((c) => c > 0).length);
      expect(count(svg, /class="ideal"/g)).toBe(16);
    }
  });

  it('the taps plot has four filters of L taps', () => {
    const eq = analysis.result.diagnostics.equalizer as EqualizerDiagnostics;
    const svg = tapsPlot(eq);
    expect(count(svg, /class="series"/g)).toBe(4);
    expect(count(svg, /class="tap"/g)).toBe(4 * eq.taps);
  });

  it('the BER plot has one dot and one error bar per measured row, and a theory curve per modulation', () => {
    const points = rows.map(sweepPoint).filter((p) => p !== null);
    expect(points).toHaveLength(3);
    const svg = berPlot(points);
    expect(count(svg, /class="error-bar"/g)).toBe(3);
    expect(count(svg, /class="point"/g)).toBe(3);
    expect(count(svg, /data-series="[a-z0-9]+ theory"/g)).toBe(3);
    expect(count(svg, /class="rule"/g)).toBe(1);
    const [gmi, ngmi] = informationPlots(points);
    expect(count(gmi, /class="point"/g)).toBe(3);
    expect(count(ngmi, /class="rule"/g)).toBe(2);
  });

  it('the frequency track has one dot per estimate, the coarse offset added back', () => {
    const track = [0, 1, 2].map((i) => ({ startSymbol: 1000 * i, symbols: 1000, freqOffsetHz: 1e6 * i }));
    const svg = frequencyTrackPlot(track, 32e9, 1.2e9);
    expect(count(svg, /class="estimate"/g)).toBe(3);
    // 1.2 GHz + 0…2 MHz: the axis is labelled in MHz around 1200.
    expect(svg).toContain('>1200.0<');
  });

  it('a line breaks where a value cannot be placed (NaN, or ≤ 0 on a log axis)', () => {
    const svg = linePlot({
      kind: 'test',
      title: 't',
      xAxis: { label: 'x' },
      yAxis: { label: 'y', log: true },
      series: [{ name: 's', x: [1, 2, 3, 4, 5, 6], y: [1, 2, Number.NaN, 4, 0, 6] }],
    });
    const d = /class="line" d="([^"]+)"/.exec(svg)![1];
    // Pieces: [1, 2], [4], [6]: three moves, one line segment.
    expect(count(d, /M/g)).toBe(3);
    expect(count(d, /L/g)).toBe(1);
  });

  it('the density ramp runs from its first to its last stop', () => {
    expect(rampColour(0)).toBe(THEME.ramp[0]);
    expect(rampColour(1)).toBe(THEME.ramp[THEME.ramp.length - 1]);
    expect(rampColour(Number.NaN)).toBe(THEME.ramp[0]);
  });
});
