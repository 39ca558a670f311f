import type { ReportFigures } from '../report-figures.js';
import { html, type Html } from './escape-html.js';
import { percent, percentRange, utc } from './format.js';
import { chartFrame, ticks } from './svg-chart.js';

/** Stroke colours of the categories' lines, in the report's category order (repeating beyond six). */
const COLOURS = ['#2f5d9a', '#b35900', '#2e7d4f', '#8a3ffc', '#a4262c', '#5c6b7a'];

const METHOD_TEXT: Record<string, string> = {
  'ppi++': 'PPI++',
  'clopper-pearson': 'random verdicts alone',
  none: 'not estimated',
  exact: 'exact',
};

/** Each category's share of the items posted each week, with its 95 % interval: a line and a band per category, and the table. */
export function prevalenceSection(f: ReportFigures): Html {
  const p = f.prevalence;
  if (!p)
    return html`<section id="prevalence"><h2>Prevalence by week</h2><p class="note">Not stated: another version was current when this report was written, and the prevalence is estimated with the current version's probabilities only.</p></section>`;
  if (p.periods.length === 0)
    return html`<section id="prevalence"><h2>Prevalence by week</h2><p class="note">No item has a posted time.</p></section>`;
  const n = p.periods.length;
  const [lo, hi] = n === 1 ? [-1, 1] : [0, n - 1];
  const step = Math.max(1, Math.ceil((hi - lo) / 8));
  const c = chartFrame({
    title: 'Share of each category by week of posting',
    className: 'prevalence',
    description: `Estimated share of each category (${f.desk.categories.join(', ')}) among the items posted each week, from ${p.periods[0].start} to ${p.periods[n - 1].start}, with 95 % bands.`,
    x: {
      min: lo,
      max: hi,
      ticks: ticks(Math.max(0, lo), Math.min(n - 1, hi), step),
      label: 'week starting (Monday, UTC)',
      format: (v) => p.periods[v]?.start.slice(5) ?? '',
    },
    y: {
      min: 0,
      max: 1,
      ticks: ticks(0, 1, 0.2),
      label: 'share of the week’s items (0–1)',
      format: (v) => v.toFixed(1),
    },
  });
  const lines = f.desk.categories.map((category, j) => {
    const colour = COLOURS[j % COLOURS.length];
    const pts = p.periods
      .map((x, i) => ({ i, v: x.perCategory.find((e) => e.category === category) }))
      .filter((e): e is { i: number; v: NonNullable<typeof e.v> } => e.v !== undefined && e.v.share !== null);
    if (pts.length === 0) return html``;
    const band = [
      ...pts.map((e) => `${c.x(e.i)},${c.y(e.v.upper)}`),
      ...pts.reverse().map((e) => `${c.x(e.i)},${c.y(e.v.lower)}`),
    ].join(' ');
    pts.reverse();
    const line = pts.map((e) => `${c.x(e.i)},${c.y(e.v.share!)}`).join(' ');
    return html`<g class="category"><polygon class="band" points="${band}" fill="${colour}" fill-opacity="0.15" stroke="none"/><polyline points="${line}" stroke="${colour}" stroke-width="2" fill="none"/>${pts.map((e) => html`<circle cx="${c.x(e.i)}" cy="${c.y(e.v.share!)}" r="3" fill="${colour}"><title>${`${category}, week of ${p.periods[e.i].start}: ${percent(e.v.share)} (${percentRange(e.v)})`}</title></circle>`)}</g>`;
  });
  const legend = f.desk.categories.map(
    (category, j) =>
      html`<span class="legend-item"><svg width="14" height="4" aria-hidden="true"><rect width="14" height="4" fill="${COLOURS[j % COLOURS.length]}"/></svg> ${category}</span> `,
  );
  return html`<section id="prevalence">
<h2>Prevalence by week</h2>
<p>The estimated share of each category among the items posted each week, with its 95 % interval, under this version, as the desk stood at ${utc(p.asOf)}.</p>
<figure>${c.svg(html`${lines}`)}
<figcaption>${legend}Lines: the estimate; bands: the 95 % interval. A week without an estimate has no point.</figcaption></figure>
<table class="keep"><thead><tr><th>week of</th><th class="num">items</th><th class="num">random verdicts</th><th class="num">decided by other draws</th>${f.desk.categories.map((x) => html`<th class="num">${x}</th>`)}</tr></thead>
<tbody>${p.periods.map(
    (x) =>
      html`<tr><td>${x.start}</td><td class="num">${x.items}</td><td class="num">${x.randomVerdicts}</td><td class="num">${x.decided}</td>${f.desk.categories.map(
        (category) => {
          const e = x.perCategory.find((v) => v.category === category);
          return e
            ? html`<td class="num">${percent(e.share)}<br>${percentRange(e)}<br>${METHOD_TEXT[e.method] ?? e.method}</td>`
            : html`<td class="num">–</td>`;
        },
      )}</tr>`,
  )}</tbody></table>
<p class="note">${p.method}${p.undated > 0 ? ` ${p.undated} items without a posted time are left out.` : ''}</p>
<p class="note">${p.approximation}</p>
</section>`;
}
