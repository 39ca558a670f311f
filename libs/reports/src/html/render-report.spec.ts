import { describe, expect, it } from 'vitest';
import { sampleFigures } from '../report-figures.test-support.js';
import { escapeHtml, html } from './escape-html.js';
import { renderReport } from './render-report.js';

const HOSTILE = `<script>alert("x")</script><img src=x onerror=alert(1)> & 'quotes'`;

describe('renderReport', () => {
  it('escapes every text that comes from users: desk, category and reviewer names, settings', () => {
    const f = sampleFigures();
    f.desk.name = HOSTILE;
    f.desk.categories = [HOSTILE, 'ok'];
    f.coverage.perCategory[0].category = HOSTILE;
    f.activity.reviewers[0].name = HOSTILE;
    f.agreement.cohen[0].reviewers = [HOSTILE, 'rowan'];
    f.agreement.perCategory[0].category = HOSTILE;
    f.settingsChanges[0].actor = HOSTILE;
    f.settingsChanges[0].after = { seedTerms: { threat: [HOSTILE] } };
    const page = renderReport(f, 'a'.repeat(64));
    expect(page).not.toContain('<script');
    expect(page).not.toContain('<img');
    expect(page).not.toMatch(/<[^>]* onerror=/);
    expect(page).toContain(
      '&lt;script&gt;alert(&quot;x&quot;)&lt;/script&gt;&lt;img src=x onerror=alert(1)&gt; &amp; &#39;quotes&#39;',
    );
  });

  it('is self-contained: no script, no external reference, a policy that forbids loading anything', () => {
    const page = renderReport(sampleFigures(), 'b'.repeat(64));
    expect(page).not.toMatch(/<script|<link|<iframe|<img|@import|url\(/i);
    // Only the SVG namespace URI, which is an identifier, not a request.
    expect(page.match(/https?:\/\/[^\s"']+/g) ?? []).toEqual([
      'http://www.w3.org/2000/svg',
      'http://www.w3.org/2000/svg',
      'http://www.w3.org/2000/svg',
    ]);
    expect(page).toContain(`content="default-src 'none'; style-src 'unsafe-inline'; img-src data:"`);
    expect(page).toMatch(/@page \{ size: A4;/);
  });

  it('draws its three charts with axes, axis titles and the reliability diagonal', () => {
    const page = renderReport(sampleFigures(), 'c'.repeat(64));
    expect(page.match(/<svg class="chart /g)).toHaveLength(3);
    expect(page).toContain('class="diagonal"');
    expect(page).toContain('confidence: top-category probability (0–1)');
    expect(page).toContain('macro-F1 (0–1)');
    expect(page.match(/class="axis x-axis"/g)).toHaveLength(3);
  });

  it('states the prevalence of each week with its interval and method, and says when it is missing', () => {
    const f = sampleFigures();
    const page = renderReport(f, 'f'.repeat(64));
    expect(page).toContain('<h2>Prevalence by week</h2>');
    // One band and one line per category with an estimate (the second week has none).
    expect(page.match(/<polygon class="band"/g)).toHaveLength(f.desk.categories.length);
    expect(page).toContain('<td>2026-02-16</td><td class="num">80</td><td class="num">12</td><td class="num">5</td>');
    expect(page).toContain('5.0 %<br>1.0–12.0 %<br>random verdicts alone');
    expect(page).toContain('–<br>0.0–100.0 %<br>not estimated');
    expect(page).toContain(f.prevalence!.approximation);
    const none = renderReport(sampleFigures({ prevalence: null }), 'f'.repeat(64));
    expect(none).toContain('another version was current when this report was written');
    expect(none.match(/<svg class="chart /g)).toHaveLength(2);
  });

  it('gives the same page for the same figures', () => {
    expect(renderReport(sampleFigures(), 'd'.repeat(64))).toBe(renderReport(sampleFigures(), 'd'.repeat(64)));
  });

  it('says so when pool figures or random checks are missing', () => {
    const f = sampleFigures({ pool: null });
    f.coverage.overall = { checks: 0, covered: 0, coverage: null, wilson: null, clopperPearson: null };
    const page = renderReport(f, 'e'.repeat(64));
    expect(page).toContain('no longer stored when the report was written');
    expect(page).toContain('No random check was answered in this period');
  });
});

describe('html', () => {
  it('escapes interpolated values once, and not markup it built itself', () => {
    const inner = html`<b>${'<i>'}</b>`;
    expect(html`<p>${inner}${['&', inner]}</p>`.text).toBe('<p><b>&lt;i&gt;</b>&amp;<b>&lt;i&gt;</b></p>');
    expect(escapeHtml(`"'<>&`)).toBe('&quot;&#39;&lt;&gt;&amp;');
  });
});
