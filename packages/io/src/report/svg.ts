/**
 * The smallest safe way to write SVG and HTML as text: markup is a branded
 * string that only {@link el}, {@link text} and {@link raw} make, so a
 * string that came from an input (a file name, a descriptor field, a note)
 * cannot reach the page without passing through {@link escapeXml}.
 */

/** Text that is already valid, escaped markup. */
export type Markup = string & { readonly __markup: true };

/** Attribute values; undefined and null leave the attribute out. */
export type Attrs = Readonly<Record<string, string | number | boolean | undefined | null>>;

/**
 * Escapes the five characters that are special in XML and HTML text and
 * attribute values (&, <, >, ", '), so that any string is shown as text.
 * @example escapeXml('<img src=x>') // '&lt;img src=x&gt;'
 */
export function escapeXml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ESCAPES[c]);
}

const ESCAPES: Readonly<Record<string, string>> = { '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' };

/** Any string as escaped text content. */
export function text(s: string): Markup {
  return escapeXml(s) as Markup;
}

/** Markup written in this module's code (constants only, never input). */
export function raw(s: string): Markup {
  return s as Markup;
}

/** Joins markup pieces. */
export function join(parts: readonly Markup[], separator = ''): Markup {
  return parts.join(separator) as Markup;
}

/**
 * An element: `tag` and attribute names are code constants; every attribute
 * value is escaped; children must already be markup.
 * @example el('circle', { cx: 3, cy: 4, r: 2 }) // '<circle cx="3" cy="4" r="2"/>'
 */
export function el(tag: string, attrs: Attrs = {}, ...children: Markup[]): Markup {
  let open = `<${tag}`;
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined || v === null || v === false) continue;
    open += v === true ? ` ${k}` : ` ${k}="${escapeXml(typeof v === 'number' ? coord(v) : v)}"`;
  }
  // HTML void elements and childless SVG elements close themselves.
  if (children.length === 0 && !HTML_CONTAINERS.has(tag)) return `${open}/>` as Markup;
  return `${open}>${children.join('')}</${tag}>` as Markup;
}

/** HTML elements that must be written with a closing tag even when empty. */
const HTML_CONTAINERS = new Set([
  'div',
  'section',
  'span',
  'td',
  'th',
  'tr',
  'table',
  'p',
  'h1',
  'h2',
  'h3',
  'pre',
  'code',
  'figure',
  'figcaption',
  'title',
  'text',
  'g',
  'svg',
  'dl',
  'dt',
  'dd',
  'header',
  'main',
  'footer',
  'ul',
  'li',
  'tbody',
  'thead',
  'style',
]);

/** A coordinate or other number for an attribute: at most 2 decimals, no trailing zeros, no '-0'. */
export function coord(v: number): string {
  const r = Math.round(v * 100) / 100;
  return Object.is(r, -0) ? '0' : String(r);
}
