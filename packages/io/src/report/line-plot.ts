import { type AxisSpec, frame, type LegendCorner, type LegendEntry, legend, legendWidth, type PlotBox, plotSvg } from './axes.js';
import { dots, errorBar, horizontalRule, line, verticalMarker } from './marks.js';
import { formatTick, niceDomain, niceTicks } from './scale.js';
import { el, type Markup, text } from './svg.js';
import { THEME } from './theme.js';

/** One series of a line plot. */
export interface LineSeries {
  /** Legend label and the data-series attribute of its group. */
  readonly name: string;
  readonly x: ArrayLike<number>;
  readonly y: ArrayLike<number>;
  /** Colour (default: the next series colour of the theme). */
  readonly colour?: string;
  /** Draw the line (default true). */
  readonly line?: boolean;
  readonly dashed?: boolean;
  /** Draw a dot per point with this class (for counting marks), e.g. 'point' or 'tap'. */
  readonly dots?: string;
  /** Open dots instead of filled ones. */
  readonly hollow?: boolean;
  /** Leave out of the legend. */
  readonly unlisted?: boolean;
}

/** An axis of a line plot: its label, and its domain unless it is to fit the data. */
export interface LineAxis {
  readonly label: string;
  readonly domain?: readonly [number, number];
  readonly log?: boolean;
}

/** A line plot: series, optional horizontal rules, vertical markers and error bars. */
export interface LinePlotSpec {
  /** data-plot attribute: 'convergence', 'phase', 'spectrum', 'taps', 'ber', 'gmi'… */
  readonly kind: string;
  readonly title: string;
  readonly box?: PlotBox;
  readonly xAxis: LineAxis;
  readonly yAxis: LineAxis;
  readonly series: readonly LineSeries[];
  /** Horizontal reference lines (thresholds), class 'rule'. */
  readonly rules?: readonly { readonly y: number; readonly label: string; readonly colour?: string }[];
  /** Vertical markers (events such as cycle slips), class 'marker'. */
  readonly markers?: readonly { readonly x: number; readonly label: string }[];
  /** Error bars, class 'error-bar'. */
  readonly errorBars?: readonly { readonly x: number; readonly lo: number; readonly hi: number; readonly colour: string }[];
  /** A second x axis along the top: the same positions labelled x + shift (e.g. OSNR over SNR). */
  readonly topAxis?: { readonly label: string; readonly shift: number };
  readonly legendCorner?: LegendCorner;
  /** Legend entries to show instead of one per listed series. */
  readonly legend?: readonly LegendEntry[];
  readonly data?: Readonly<Record<string, string>>;
}

const BOX: PlotBox = { width: 560, height: 320 };

/**
 * Draws a line plot. Each series is a group `<g class="series"
 * data-series="NAME">` holding its line and its dots; a domain not given
 * fits the data (nice round ends; on a log axis, whole decades around the
 * positive values).
 * @throws RangeError for an empty or non-positive log domain given explicitly
 */
export function linePlot(spec: LinePlotSpec): Markup {
  const colourOf = (s: LineSeries, i: number) => s.colour ?? THEME.series[i % THEME.series.length];
  const entries: readonly LegendEntry[] =
    spec.legend ??
    spec.series
      .map((s, i) => ({ s, i }))
      .filter(({ s }) => !s.unlisted && s.x.length > 0)
      .map(({ s, i }) => ({
        label: s.name,
        colour: colourOf(s, i),
        kind: s.line === false ? (s.hollow ? 'ring' : 'dot') : s.dashed ? 'dash' : 'line',
      }));
  const topRoom = spec.topAxis ? 22 : 0;
  const base = spec.box ?? BOX;
  const outside = spec.legendCorner === 'outside' && entries.length > 1 ? legendWidth(entries) + 16 : 0;
  const box: PlotBox = {
    width: base.width + outside,
    height: base.height,
    margin: { top: 30 + topRoom, right: 18 + outside, bottom: 46, left: 62 },
  };
  const xs = (s: LineSeries) => Array.from(s.x);
  const ys = (s: LineSeries) => Array.from(s.y);
  const extraY = [...(spec.rules ?? []).map((r) => r.y), ...(spec.errorBars ?? []).flatMap((b) => [b.lo, b.hi])];
  const xAxis: AxisSpec = {
    label: spec.xAxis.label,
    log: spec.xAxis.log,
    domain: spec.xAxis.domain ?? fit(spec.series.flatMap(xs), spec.xAxis.log, 0),
  };
  const yAxis: AxisSpec = {
    label: spec.yAxis.label,
    log: spec.yAxis.log,
    domain: spec.yAxis.domain ?? fit([...spec.series.flatMap(ys), ...extraY], spec.yAxis.log, 0.04),
  };
  const f = frame(box, xAxis, yAxis);
  const content: Markup[] = [];
  for (const r of spec.rules ?? []) content.push(horizontalRule(f, r.y, r.label, r.colour ?? THEME.threshold, 'rule'));
  for (const m of spec.markers ?? []) content.push(verticalMarker(f, m.x, m.label, THEME.threshold, 'marker'));
  const colours = spec.series.map(colourOf);
  for (const b of spec.errorBars ?? []) content.push(errorBar(f, b.x, b.lo, b.hi, b.colour));
  spec.series.forEach((s, i) => {
    const parts: Markup[] = [];
    if (s.line !== false) parts.push(line(f, s.x, s.y, { colour: colours[i], dash: s.dashed ? '6 4' : undefined }));
    if (s.dots) parts.push(dots(f, s.x, s.y, { colour: colours[i], cls: s.dots, radius: 3, hollow: s.hollow }));
    content.push(el('g', { class: 'series', 'data-series': s.name }, ...parts));
  });
  const overlay: Markup[] = [];
  if (entries.length > 1) overlay.push(legend(f, entries, spec.legendCorner));
  if (spec.topAxis) overlay.push(topAxis(f, spec.topAxis.label, spec.topAxis.shift));
  return plotSvg(f, { kind: spec.kind, title: spec.title, data: spec.data }, content, overlay);
}

/** A domain that fits the values: nice linear ends, or whole decades on a log axis. */
function fit(values: number[], log: boolean | undefined, pad: number): [number, number] {
  if (!log) return niceDomain(values, pad);
  const positive = values.filter((v) => v > 0 && Number.isFinite(v));
  if (positive.length === 0) return [1e-6, 1];
  const lo = 10 ** Math.floor(Math.log10(Math.min(...positive)) + 1e-9);
  let hi = 10 ** Math.ceil(Math.log10(Math.max(...positive)) - 1e-9);
  if (hi <= lo) hi = lo * 10;
  return [lo, hi];
}

/** Ticks along the top edge labelled x + shift, at nice values of x + shift. */
function topAxis(f: ReturnType<typeof frame>, label: string, shift: number): Markup {
  const [d0, d1] = f.x.domain;
  const values = niceTicks(d0 + shift, d1 + shift, 5);
  const step = values.length > 1 ? values[1] - values[0] : 1;
  const ticks = values.map((v) => {
    const px = f.x.map(v - shift);
    return el(
      'g',
      {},
      el('line', { x1: px, x2: px, y1: f.y0, y2: f.y0 - 5, stroke: THEME.muted }),
      el('text', { x: px, y: f.y0 - 8, 'text-anchor': 'middle' }, text(formatTick(v, step))),
    );
  });
  return el(
    'g',
    { class: 'tick top-axis' },
    ...ticks,
    el('text', { class: 'axis-label', x: f.x1, y: 18, 'text-anchor': 'end' }, text(label)),
  );
}
