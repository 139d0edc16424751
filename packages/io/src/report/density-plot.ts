import { constellation } from '@intradyne/core';
import type { ConstellationHistogram } from '@intradyne/metrics';
import { type Frame, frame, plotSvg } from './axes.js';
import { dots } from './marks.js';
import { el, type Markup, text } from './svg.js';
import { rampColour, THEME } from './theme.js';

/**
 * The constellation density of one polarization: one square `rect.cell`
 * per grid cell holding symbols, coloured by log(1 + count)/log(1 + max) so
 * that sparse outliers stay visible beside dense clouds, and the M ideal
 * points (`circle.ideal`) scaled by `gain` (the received amplitude of a
 * unit-power constellation point; 1 when unknown). A colour bar beside it
 * gives the counts.
 */
export function densityPlot(h: ConstellationHistogram, pol: 'x' | 'y', gain: number): Markup {
  const size = 400;
  const e = h.extent;
  // The right margin holds the colour bar.
  const f = frame(
    { width: size + 44, height: size + 10, margin: { top: 30, right: 58, bottom: 50, left: 54 } },
    { domain: [-e, e], label: 'in-phase', tickCount: 4 },
    { domain: [-e, e], label: 'quadrature', tickCount: 4 },
  );
  const counts = h[pol];
  let max = 0;
  for (const c of counts) if (c > max) max = c;
  const w = (2 * e) / h.bins;
  const norm = Math.log1p(max);
  const cells: Markup[] = [];
  for (let r = 0; r < h.bins; r++) {
    for (let c = 0; c < h.bins; c++) {
      const n = counts[r * h.bins + c];
      if (n === 0) continue;
      const left = f.x.map(-e + c * w);
      const top = f.y.map(-e + (r + 1) * w);
      // A hair wider than the cell so that anti-aliasing leaves no seams between neighbours.
      cells.push(
        el('rect', {
          class: 'cell',
          x: left,
          y: top,
          width: f.x.map(-e + (c + 1) * w) - left + 0.4,
          height: f.y.map(-e + r * w) - top + 0.4,
          fill: rampColour(Math.log1p(n) / norm),
        }),
      );
    }
  }
  const points = constellation(h.modulation).points;
  const g = gain > 0 && Number.isFinite(gain) ? gain : 1;
  const px: number[] = [];
  const py: number[] = [];
  for (let k = 0; k < points.length; k += 2) {
    px.push(g * points[k]);
    py.push(g * points[k + 1]);
  }
  return plotSvg(
    f,
    { kind: 'density', title: `Polarization ${pol}: recovered symbols`, data: { pol } },
    [
      el('rect', { x: f.x0, y: f.y0, width: f.x1 - f.x0, height: f.y1 - f.y0, fill: THEME.panel }),
      el('g', { class: 'cells' }, ...cells),
      el('g', { class: 'ideal-points' }, dots(f, px, py, { colour: THEME.ideal, cls: 'ideal', radius: 2.8, hollow: true })),
    ],
    [colourBar(f, max)],
  );
}

/** Steps of the colour bar. */
const BAR_STEPS = 24;

/** The colour scale beside the plot: symbols per cell, 1 at the bottom to the fullest cell at the top. */
function colourBar(f: Frame, max: number): Markup {
  const x = f.x1 + 12;
  const h = (f.y1 - f.y0) / BAR_STEPS;
  const steps = Array.from({ length: BAR_STEPS }, (_, i) =>
    el('rect', { x, y: f.y1 - (i + 1) * h, width: 10, height: h + 0.4, fill: rampColour((i + 0.5) / BAR_STEPS) }),
  );
  const label = (y: number, s: string) => el('text', { x: x + 14, y, 'font-size': 10.5, fill: THEME.muted }, text(s));
  return el(
    'g',
    { class: 'colour-bar' },
    ...steps,
    el('rect', { x, y: f.y0, width: 10, height: f.y1 - f.y0, fill: 'none', stroke: THEME.rule }),
    label(f.y0 + 9, String(max)),
    label(f.y1, '1'),
    el('text', { x: x + 5, y: f.y1 + 30, 'text-anchor': 'middle', 'font-size': 10.5, fill: THEME.muted }, text('per cell')),
  );
}
