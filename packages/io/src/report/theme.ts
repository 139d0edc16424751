/**
 * The report's visual style, in one place: a warm paper background, ink-blue
 * text, eight series colours, the first four chosen to stay apart for
 * colour-blind readers (teal, amber, plum, slate), then moss, rose, bronze
 * and sky for sweeps of more formats (one per modulation present, in order
 * of size; shaped formats after the uniform one of the same size), and a
 * density ramp from paper to deep ink.
 * Only system font stacks: the page loads nothing.
 */
export const THEME = {
  paper: '#fbfaf6',
  panel: '#ffffff',
  ink: '#1f2b3a',
  muted: '#5d6978',
  rule: '#d9d4c7',
  grid: '#ece8de',
  good: '#2f7d4f',
  bad: '#b23a2e',
  /** Series colours, in order of use. */
  series: ['#147a78', '#c77614', '#7d3f7a', '#3f5f9d', '#5e8a2c', '#a8506f', '#8a6a1e', '#2f86b8'] as const,
  /** Reference curves (theory) and thresholds. */
  reference: '#1f2b3a',
  threshold: '#b23a2e',
  /** The density ramp, light (few symbols) to dark (many). */
  ramp: ['#f1ede2', '#c9e3da', '#7cc0b0', '#2f8f8c', '#1e5b72', '#1c2b4a'] as const,
  /** Ideal constellation points drawn over the density. */
  ideal: '#e2860f',
  sans: 'system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "Liberation Sans", Arial, sans-serif',
  mono: 'ui-monospace, "SF Mono", Menlo, Consolas, "DejaVu Sans Mono", "Liberation Mono", monospace',
} as const;

/**
 * Colour of a density cell, t in [0, 1] (0 the fewest symbols, 1 the most),
 * by linear interpolation between the ramp's stops.
 * @example rampColour(0) // '#f1ede2'
 */
export function rampColour(t: number): string {
  const stops = THEME.ramp;
  const x = Math.min(1, Math.max(0, Number.isFinite(t) ? t : 0)) * (stops.length - 1);
  const i = Math.min(stops.length - 2, Math.floor(x));
  const f = x - i;
  const a = hex(stops[i]);
  const b = hex(stops[i + 1]);
  const mix = (k: number) =>
    Math.round(a[k] + (b[k] - a[k]) * f)
      .toString(16)
      .padStart(2, '0');
  return `#${mix(0)}${mix(1)}${mix(2)}`;
}

function hex(c: string): [number, number, number] {
  return [Number.parseInt(c.slice(1, 3), 16), Number.parseInt(c.slice(3, 5), 16), Number.parseInt(c.slice(5, 7), 16)];
}

/** The page's style sheet. */
export function styleSheet(): string {
  const t = THEME;
  return `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { margin: 0; background: ${t.paper}; color: ${t.ink}; font: 15px/1.45 ${t.sans}; }
header.top { padding: 22px 32px 16px; border-bottom: 3px solid ${t.ink}; background: ${t.panel}; }
header.top h1 { margin: 0 0 4px; font-size: 22px; font-weight: 650; letter-spacing: 0.01em; overflow-wrap: anywhere; }
header.top .sub { color: ${t.muted}; font-size: 14px; overflow-wrap: anywhere; }
.verdict { display: inline-block; margin-left: 10px; padding: 1px 9px; border-radius: 3px; font-size: 13px; font-weight: 600; vertical-align: 3px; color: #fff; }
.verdict.ok { background: ${t.good}; }
.verdict.failed { background: ${t.bad}; }
.figures { display: flex; flex-wrap: wrap; gap: 0; margin: 14px 0 0; }
.figures div { padding: 4px 18px 4px 0; margin-right: 18px; border-right: 1px solid ${t.rule}; }
.figures div:last-child { border-right: none; }
.figures dt { font-size: 12px; color: ${t.muted}; text-transform: uppercase; letter-spacing: 0.06em; }
.figures dd { margin: 0; font: 600 18px/1.3 ${t.mono}; }
main { padding: 8px 32px 40px; max-width: 1320px; }
section { margin-top: 26px; }
section > h2 { font-size: 17px; font-weight: 650; margin: 0 0 4px; padding-bottom: 4px; border-bottom: 1px solid ${t.rule}; }
section > p.note { margin: 4px 0 10px; color: ${t.muted}; font-size: 13.5px; max-width: 80ch; }
.plots { display: flex; flex-wrap: wrap; gap: 16px; }
figure { margin: 0; background: ${t.panel}; border: 1px solid ${t.rule}; border-radius: 4px; padding: 8px 10px 6px; }
figure svg { display: block; }
figcaption { font-size: 12.5px; color: ${t.muted}; max-width: 60ch; padding-top: 2px; }
svg.plot text { font-family: ${t.sans}; fill: ${t.ink}; }
svg.plot .title { font-size: 13.5px; font-weight: 600; }
svg.plot .tick text { font-size: 11px; fill: ${t.muted}; }
svg.plot .axis-label { font-size: 12px; }
svg.plot .legend text { font-size: 11.5px; }
table.values { border-collapse: collapse; font-size: 13px; background: ${t.panel}; border: 1px solid ${t.rule}; }
table.values th, table.values td { text-align: left; padding: 3px 12px 3px 8px; border-bottom: 1px solid ${t.grid}; vertical-align: top; }
table.values th { font-weight: 600; background: ${t.paper}; }
table.values td.num { font-family: ${t.mono}; text-align: right; white-space: nowrap; }
table.values td.key { font-family: ${t.mono}; color: ${t.muted}; overflow-wrap: anywhere; }
table.values td.val { font-family: ${t.mono}; overflow-wrap: anywhere; max-width: 70ch; }
pre.record { font: 12px/1.4 ${t.mono}; background: ${t.panel}; border: 1px solid ${t.rule}; padding: 10px 12px; overflow: auto; max-height: 420px; white-space: pre-wrap; overflow-wrap: anywhere; }
footer { padding: 16px 32px 28px; color: ${t.muted}; font-size: 12.5px; border-top: 1px solid ${t.rule}; }
`;
}
