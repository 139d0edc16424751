import type { EqualizerDiagnostics } from '@intradyne/core';
import { linePlot } from './line-plot.js';
import { niceDomain } from './scale.js';
import type { Markup } from './svg.js';

/** The four filters of the butterfly, in the order drawn. */
export const FILTERS = ['xx', 'xy', 'yx', 'yy'] as const;

/**
 * The magnitude |h[j]| of every tap of the four butterfly filters against
 * the tap's offset from the centre, in samples at 2 Sa/symbol: one group
 * per filter, one `circle.tap` per tap.
 */
export function tapsPlot(d: EqualizerDiagnostics): Markup {
  const c = (d.taps - 1) / 2;
  const offsets = Array.from({ length: d.taps }, (_, j) => j - c);
  const magnitudes = FILTERS.map((k) => offsets.map((_, j) => Math.hypot(d.finalTaps[k][2 * j], d.finalTaps[k][2 * j + 1])));
  return linePlot({
    kind: 'taps',
    title: 'Equalizer taps at the end of the capture',
    xAxis: { label: 'tap offset from the centre (samples, T/2)' },
    // Magnitudes start at 0.
    yAxis: { label: '|h|', domain: niceDomain([0, ...magnitudes.flat()]) },
    series: FILTERS.map((k, i) => ({ name: `h${k}`, x: offsets, y: magnitudes[i], dots: 'tap' })),
  });
}

/**
 * The equalizer's convergence: the mean cost of its active rule per output
 * (log axis) and the separation index per output, against adapted symbols
 * (the passes over the start of the capture included), with the rule
 * switches marked and the convergence threshold drawn.
 */
export function convergencePlots(d: EqualizerDiagnostics): Markup[] {
  const t = d.trace;
  // Point i averages adapted symbols [i·every, (i + 1)·every): drawn at the interval's middle, in thousands.
  const at = Array.from(t.costX, (_, i) => ((i + 0.5) * t.every) / 1000);
  const markers = d.phases.filter((p) => p.fromSymbol > 0).map((p) => ({ x: p.fromSymbol / 1000, label: p.rule }));
  const xAxis = { label: 'adapted symbols (thousands)' };
  return [
    linePlot({
      kind: 'convergence',
      title: 'Equalizer cost per symbol',
      xAxis,
      yAxis: { label: 'cost per symbol', log: true },
      series: [
        { name: 'output x', x: at, y: t.costX },
        { name: 'output y', x: at, y: t.costY },
      ],
      markers,
    }),
    linePlot({
      kind: 'separation',
      title: 'Polarization separation',
      xAxis,
      yAxis: { label: 'separation index', domain: [0, 1.05] },
      series: [
        { name: 'output x', x: at, y: t.separationX },
        { name: 'output y', x: at, y: t.separationY },
      ],
      rules: [{ y: d.convergence.threshold, label: `converged above ${d.convergence.threshold}` }],
      markers,
      legendCorner: 'bottom-left',
    }),
  ];
}
