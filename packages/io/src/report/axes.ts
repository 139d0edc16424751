import { linearScale, logScale, type Scale } from './scale.js';
import { coord, el, join, type Markup, text } from './svg.js';
import { THEME } from './theme.js';

/** One axis of a plot: its data interval, its kind and its label (with units). */
export interface AxisSpec {
  readonly domain: readonly [number, number];
  readonly log?: boolean;
  readonly label: string;
  readonly tickCount?: number;
}

/** A plot's size in pixels and its margins (room for ticks, labels and the title). */
export interface PlotBox {
  readonly width: number;
  readonly height: number;
  readonly margin?: { readonly top: number; readonly right: number; readonly bottom: number; readonly left: number };
}

/** The drawing area of a plot and its two scales (y runs upwards on the page). */
export interface Frame {
  readonly width: number;
  readonly height: number;
  /** Inner area, pixels: x0 < x1, y0 (top) < y1 (bottom). */
  readonly x0: number;
  readonly x1: number;
  readonly y0: number;
  readonly y1: number;
  readonly x: Scale;
  readonly y: Scale;
  readonly xAxis: AxisSpec;
  readonly yAxis: AxisSpec;
}

const DEFAULT_MARGIN = { top: 30, right: 18, bottom: 46, left: 62 };

/**
 * The frame of a plot: inner area from the margins, scales onto it.
 * @throws RangeError for a domain a scale refuses (empty, or ≤ 0 on a log axis)
 */
export function frame(box: PlotBox, xAxis: AxisSpec, yAxis: AxisSpec): Frame {
  const m = box.margin ?? DEFAULT_MARGIN;
  const x0 = m.left;
  const x1 = box.width - m.right;
  const y0 = m.top;
  const y1 = box.height - m.bottom;
  const scale = (a: AxisSpec, r: [number, number]) => (a.log ? logScale(a.domain, r) : linearScale(a.domain, r, a.tickCount));
  return {
    width: box.width,
    height: box.height,
    x0,
    x1,
    y0,
    y1,
    x: scale(xAxis, [x0, x1]),
    y: scale(yAxis, [y1, y0]),
    xAxis,
    yAxis,
  };
}

/** Grid lines, the frame, ticks with their labels, and the axis labels. */
export function axes(f: Frame): Markup {
  const parts: Markup[] = [];
  const grid: Markup[] = [];
  const ticks: Markup[] = [];
  for (const t of f.x.ticks()) {
    const px = f.x.map(t.value);
    if (t.major) grid.push(el('line', { x1: px, x2: px, y1: f.y0, y2: f.y1 }));
    ticks.push(el('line', { x1: px, x2: px, y1: f.y1, y2: f.y1 + (t.major ? 5 : 3) }));
    if (t.label) ticks.push(el('text', { x: px, y: f.y1 + 17, 'text-anchor': 'middle' }, text(t.label)));
  }
  for (const t of f.y.ticks()) {
    const py = f.y.map(t.value);
    if (t.major) grid.push(el('line', { x1: f.x0, x2: f.x1, y1: py, y2: py }));
    ticks.push(el('line', { x1: f.x0 - (t.major ? 5 : 3), x2: f.x0, y1: py, y2: py }));
    if (t.label) ticks.push(el('text', { x: f.x0 - 8, y: py + 4, 'text-anchor': 'end' }, text(t.label)));
  }
  parts.push(el('g', { class: 'grid', stroke: THEME.grid, 'stroke-width': 1 }, ...grid));
  parts.push(
    el('rect', { class: 'frame', x: f.x0, y: f.y0, width: f.x1 - f.x0, height: f.y1 - f.y0, fill: 'none', stroke: THEME.muted }),
  );
  parts.push(el('g', { class: 'tick', stroke: THEME.muted }, ...ticks));
  parts.push(
    el('text', { class: 'axis-label', x: (f.x0 + f.x1) / 2, y: f.height - 8, 'text-anchor': 'middle' }, text(f.xAxis.label)),
  );
  const ly = (f.y0 + f.y1) / 2;
  parts.push(
    el(
      'text',
      { class: 'axis-label', x: 14, y: ly, 'text-anchor': 'middle', transform: `rotate(-90 14 ${coord(ly)})` },
      text(f.yAxis.label),
    ),
  );
  return join(parts);
}

/** What a plot is, for its title, its accessible name and the tests. */
export interface PlotInfo {
  /** The plot kind (data-plot attribute): 'density', 'ber', 'taps'… */
  readonly kind: string;
  readonly title: string;
  /** Extra data attributes on the svg element (e.g. the polarization). */
  readonly data?: Readonly<Record<string, string>>;
}

/**
 * The whole plot: an svg element holding the axes, the data marks (clipped
 * to the inner area by a nested viewport) and `overlay` marks drawn
 * unclipped on top (legends, labels).
 */
export function plotSvg(f: Frame, info: PlotInfo, content: readonly Markup[], overlay: readonly Markup[] = []): Markup {
  const w = f.x1 - f.x0;
  const h = f.y1 - f.y0;
  const data: Record<string, string> = {};
  for (const [k, v] of Object.entries(info.data ?? {})) data[`data-${k}`] = v;
  return el(
    'svg',
    {
      class: 'plot',
      'data-plot': info.kind,
      ...data,
      xmlns: 'http://www.w3.org/2000/svg',
      width: f.width,
      height: f.height,
      viewBox: `0 0 ${coord(f.width)} ${coord(f.height)}`,
      role: 'img',
      'aria-label': info.title,
    },
    el('title', {}, text(info.title)),
    el('text', { class: 'title', x: f.x0, y: 18 }, text(info.title)),
    axes(f),
    el(
      'svg',
      {
        class: 'marks',
        x: f.x0,
        y: f.y0,
        width: w,
        height: h,
        viewBox: `${coord(f.x0)} ${coord(f.y0)} ${coord(w)} ${coord(h)}`,
        overflow: 'hidden',
      },
      ...content,
    ),
    ...overlay,
  );
}

/** One legend entry: a line, a dashed line, a dot or a ring in a colour. */
export interface LegendEntry {
  readonly label: string;
  readonly colour: string;
  readonly kind: 'line' | 'dash' | 'dot' | 'ring';
}

/** Where a legend sits inside the plot area. */
export type LegendCorner = 'top-right' | 'bottom-left' | 'bottom-right' | 'outside';

/** Width a legend of these entries takes, pixels. */
export function legendWidth(entries: readonly LegendEntry[]): number {
  return 30 + 6.4 * Math.max(0, ...entries.map((e) => e.label.length));
}

/** A legend in a corner of the inner area, one entry per line. */
export function legend(f: Frame, entries: readonly LegendEntry[], corner: LegendCorner = 'top-right'): Markup {
  if (entries.length === 0) return join([]);
  const w = legendWidth(entries);
  const h = 8 + 16 * entries.length;
  // 'outside' sits right of the plot area, in the room the caller left in the right margin.
  const x = corner === 'outside' ? f.x1 + 10 : corner === 'bottom-left' ? f.x0 + 6 : f.x1 - w - 6;
  const y = corner === 'top-right' || corner === 'outside' ? f.y0 + 6 : f.y1 - h - 6;
  const rows = entries.map((e, i) => {
    const cy = y + 12 + 16 * i;
    const mark =
      e.kind === 'dot' || e.kind === 'ring'
        ? el('circle', {
            cx: x + 14,
            cy,
            r: 3.5,
            fill: e.kind === 'dot' ? e.colour : 'none',
            stroke: e.colour,
            'stroke-width': 1.5,
          })
        : el('line', {
            x1: x + 6,
            x2: x + 22,
            y1: cy,
            y2: cy,
            stroke: e.colour,
            'stroke-width': 2,
            'stroke-dasharray': e.kind === 'dash' ? '5 3' : undefined,
          });
    return join([mark, el('text', { x: x + 28, y: cy + 4 }, text(e.label))]);
  });
  return el(
    'g',
    { class: 'legend' },
    el('rect', { x, y, width: w, height: h, fill: THEME.panel, 'fill-opacity': 0.88, stroke: THEME.rule }),
    ...rows,
  );
}
