import { describe, expect, it } from 'vitest';
import { reportPage } from '../../src/report/page.js';
import { el, escapeXml, text } from '../../src/report/svg.js';

describe('escaping', () => {
  it('escapes the five characters special in HTML and XML', () => {
    expect(escapeXml(`<a href="x" title='y'>&</a>`)).toBe('&lt;a href=&quot;x&quot; title=&#39;y&#39;&gt;&amp;&lt;/a&gt;');
  });

  it('escapes attribute values and text, and leaves no raw markup from an input', () => {
    const hostile = '"><script>alert(1)</script><img src=x onerror=alert(2)>';
    const m = el('g', { 'data-series': hostile }, text(hostile));
    expect(m).not.toContain('<script');
    expect(m).not.toContain('<img');
    expect(m).toContain('&lt;script&gt;');
    expect(el('circle', { cx: 1.234, cy: -0.001, r: 3 })).toBe('<circle cx="1.23" cy="0" r="3"/>');
  });

  it('writes a page whose title, headings and figures from inputs are text, under a policy that forbids scripts and fetches', () => {
    const hostile = '<img src=x onerror="window.__pwned=1">';
    const page = reportPage({
      title: hostile,
      subtitle: `<script>window.__pwned=2</script>`,
      figures: [[hostile, hostile]],
      sections: [{ id: 's', heading: hostile, note: hostile, body: text(hostile) }],
      footer: hostile,
    });
    expect(page).not.toMatch(/<img|<script/i);
    expect(page).toContain("default-src 'none'");
    // Shown as text 8 times: the document title, the heading, the figure name and value, the section heading, note and body, the footer.
    expect(page.match(/&lt;img src=x onerror=&quot;window.__pwned=1&quot;&gt;/g)?.length).toBe(8);
  });
});
