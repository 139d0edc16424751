import { el, join, type Markup, raw, text } from './svg.js';
import { styleSheet } from './theme.js';

/** One section of the report: a heading, an optional note on how to read it, and its content. */
export interface ReportSection {
  readonly id: string;
  readonly heading: string;
  readonly note?: string;
  readonly body: Markup;
}

/** The whole page. Every string here is escaped when written. */
export interface ReportPage {
  /** The document title and the big heading (e.g. the capture's name). */
  readonly title: string;
  readonly subtitle: string;
  readonly verdict?: { readonly ok: boolean; readonly label: string };
  /** Key figures shown under the heading, as [name, value]. */
  readonly figures?: readonly (readonly [string, string])[];
  readonly sections: readonly ReportSection[];
  readonly footer: string;
}

/**
 * The report as one self-contained HTML document: the style sheet inline,
 * the plots inline SVG, no script, no font, no image and no link to load.
 * Its content security policy forbids every fetch and every script, so even
 * markup that slipped into a string could neither run nor call out.
 */
export function reportPage(p: ReportPage): string {
  const verdict = p.verdict
    ? el('span', { class: `verdict ${p.verdict.ok ? 'ok' : 'failed'}` }, text(p.verdict.label))
    : join([]);
  const figures = p.figures?.length
    ? el('dl', { class: 'figures' }, ...p.figures.map(([k, v]) => el('div', {}, el('dt', {}, text(k)), el('dd', {}, text(v)))))
    : join([]);
  const sections = p.sections.map((s) =>
    el(
      'section',
      { id: s.id },
      el('h2', {}, text(s.heading)),
      s.note ? el('p', { class: 'note' }, text(s.note)) : join([]),
      s.body,
    ),
  );
  const body = el(
    'body',
    {},
    el('header', { class: 'top' }, el('h1', {}, text(p.title), verdict), el('div', { class: 'sub' }, text(p.subtitle)), figures),
    el('main', {}, ...sections),
    el('footer', {}, text(p.footer)),
  );
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>${text(p.title)}</title>
<style>${raw(styleSheet())}</style>
</head>
${body}
</html>
`;
}

/** A plot with its caption. */
export function figure(plot: Markup, caption?: string): Markup {
  return el('figure', {}, plot, caption ? el('figcaption', {}, text(caption)) : join([]));
}

/** Plots side by side, wrapping on narrow screens. */
export function plotRow(...figures: Markup[]): Markup {
  return el('div', { class: 'plots' }, ...figures);
}
