import { el, type Markup, text } from './svg.js';

/** Arrays longer than this are summarized in the table (the plots show them). */
const LONGEST_LISTED = 8;

/**
 * Every leaf of a JSON-like value as [path, text] rows, depth first in key
 * order: `perPol.x.ber`, `diagnostics.equalizer.convergence.converged`…
 * Long arrays (traces, taps, spectra) become a one-line summary.
 * @example flattenValues({ a: { b: 1 } }) // [['a.b', '1']]
 */
export function flattenValues(value: unknown, prefix = ''): [string, string][] {
  if (value === null || value === undefined) return [[prefix, '–']];
  if (typeof value === 'number') return [[prefix, formatNumber(value)]];
  if (typeof value === 'string' || typeof value === 'boolean') return [[prefix, String(value)]];
  if (ArrayBuffer.isView(value) || Array.isArray(value)) {
    const items = Array.from(value as ArrayLike<unknown>);
    if (items.length > LONGEST_LISTED || items.some((v) => typeof v === 'object' && v !== null)) {
      if (items.every((v) => typeof v === 'number') || items.length > LONGEST_LISTED)
        return [[prefix, `${items.length} values (see the plots)`]];
      return items.flatMap((v, i) => flattenValues(v, `${prefix}[${i}]`));
    }
    return [[prefix, `[${items.map((v) => (typeof v === 'number' ? formatNumber(v) : String(v))).join(', ')}]`]];
  }
  if (typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>);
    if (entries.length === 0) return [[prefix, '{}']];
    return entries.flatMap(([k, v]) => flattenValues(v, prefix ? `${prefix}.${k}` : k));
  }
  return [[prefix, String(value)]];
}

/** A number for the table: 6 significant digits, exponent form for the very small and very large. */
export function formatNumber(v: number): string {
  if (!Number.isFinite(v)) return Number.isNaN(v) ? '–' : v > 0 ? '∞' : '−∞';
  if (Number.isInteger(v) && Math.abs(v) < 1e15) return String(v);
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e7)) return v.toExponential(4);
  return String(Number(v.toPrecision(6)));
}

/** A two-column table of name and value, every string escaped. */
export function valueTable(rows: readonly [string, string][], headings: readonly [string, string] = ['field', 'value']): Markup {
  return el(
    'table',
    { class: 'values' },
    el('thead', {}, el('tr', {}, el('th', {}, text(headings[0])), el('th', {}, text(headings[1])))),
    el(
      'tbody',
      {},
      ...rows.map(([k, v]) => el('tr', {}, el('td', { class: 'key' }, text(k)), el('td', { class: 'val' }, text(v)))),
    ),
  );
}

/** A table with a header row and any number of columns; numeric cells right-aligned. */
export function gridTable(headings: readonly string[], rows: readonly (readonly string[])[]): Markup {
  // A bound is a number too: '< 1.2e-5', '> 12.3'.
  const numeric = (s: string) => /^([<>≤≥] )?[−\-+]?[\d.]+(e[−\-+]?\d+)?( |$)/.test(s) || s === '–';
  return el(
    'table',
    { class: 'values' },
    el('thead', {}, el('tr', {}, ...headings.map((h) => el('th', {}, text(h))))),
    el('tbody', {}, ...rows.map((r) => el('tr', {}, ...r.map((c) => el('td', { class: numeric(c) ? 'num' : 'val' }, text(c)))))),
  );
}
