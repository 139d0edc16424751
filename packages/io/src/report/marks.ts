import type { Frame } from './axes.js';
import { coord, el, join, type Markup, text } from './svg.js';

/** True when a value can be placed on the scale (finite, and > 0 on a log scale). */
function placeable(f: Frame, axis: 'x' | 'y', v: number): boolean {
  return Number.isFinite(v) && (f[axis].kind !== 'log' || v > 0);
}

/**
 * A line through the points (xs[i], ys[i]) in order, as one path; a point
 * that cannot be placed (NaN, or ≤ 0 on a log axis) breaks the line.
 * @param xs, ys equal lengths
 */
export function line(
  f: Frame,
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  style: { readonly colour: string; readonly width?: number; readonly dash?: string; readonly cls?: string },
): Markup {
  let d = '';
  let pen = false;
  for (let i = 0; i < xs.length; i++) {
    if (!placeable(f, 'x', xs[i]) || !placeable(f, 'y', ys[i])) {
      pen = false;
      continue;
    }
    d += `${pen ? 'L' : 'M'}${coord(f.x.map(xs[i]))} ${coord(f.y.map(ys[i]))}`;
    pen = true;
  }
  if (d === '') return join([]);
  return el('path', {
    class: style.cls ?? 'line',
    d,
    fill: 'none',
    stroke: style.colour,
    'stroke-width': style.width ?? 1.6,
    'stroke-dasharray': style.dash,
    'stroke-linejoin': 'round',
  });
}

/** One dot per placeable point, class `cls` (for counting marks). */
export function dots(
  f: Frame,
  xs: ArrayLike<number>,
  ys: ArrayLike<number>,
  style: { readonly colour: string; readonly radius?: number; readonly cls: string; readonly hollow?: boolean },
): Markup {
  const out: Markup[] = [];
  for (let i = 0; i < xs.length; i++) {
    if (!placeable(f, 'x', xs[i]) || !placeable(f, 'y', ys[i])) continue;
    out.push(
      el('circle', {
        class: style.cls,
        cx: f.x.map(xs[i]),
        cy: f.y.map(ys[i]),
        r: style.radius ?? 3,
        fill: style.hollow ? 'none' : style.colour,
        stroke: style.colour,
        'stroke-width': style.hollow ? 1.5 : undefined,
      }),
    );
  }
  return join(out);
}

/** A vertical error bar from `lo` to `hi` at x, with caps (an unplaceable lo is drawn to the bottom edge). */
export function errorBar(f: Frame, x: number, lo: number, hi: number, colour: string): Markup {
  if (!placeable(f, 'x', x) || !placeable(f, 'y', hi)) return join([]);
  const px = f.x.map(x);
  const top = f.y.map(hi);
  const bottom = placeable(f, 'y', lo) ? f.y.map(lo) : f.y1 + 2;
  const cap = 4;
  return el('path', {
    class: 'error-bar',
    d: `M${coord(px)} ${coord(bottom)}V${coord(top)}M${coord(px - cap)} ${coord(top)}H${coord(px + cap)}M${coord(px - cap)} ${coord(bottom)}H${coord(px + cap)}`,
    stroke: colour,
    'stroke-width': 1.2,
    fill: 'none',
  });
}

/** A horizontal reference line across the inner area at data value y, labelled at its right end. */
export function horizontalRule(f: Frame, y: number, label: string, colour: string, cls: string): Markup {
  if (!placeable(f, 'y', y)) return join([]);
  const py = f.y.map(y);
  return el(
    'g',
    { class: cls },
    el('line', { x1: f.x0, x2: f.x1, y1: py, y2: py, stroke: colour, 'stroke-width': 1.3, 'stroke-dasharray': '6 4' }),
    el('text', { x: f.x1 - 4, y: py - 4, 'text-anchor': 'end', 'font-size': 11, fill: colour }, text(label)),
  );
}

/** A vertical marker line at data value x (e.g. a cycle slip), with a short label at its top. */
export function verticalMarker(f: Frame, x: number, label: string, colour: string, cls: string): Markup {
  if (!placeable(f, 'x', x)) return join([]);
  const px = f.x.map(x);
  return el(
    'g',
    { class: cls },
    el('line', { x1: px, x2: px, y1: f.y0, y2: f.y1, stroke: colour, 'stroke-width': 1.2, 'stroke-dasharray': '2 3' }),
    el('text', { x: px + 3, y: f.y0 + 12, 'font-size': 10.5, fill: colour }, text(label)),
  );
}
