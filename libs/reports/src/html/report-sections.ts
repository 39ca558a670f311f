import type { ReportFigures } from '../report-figures.js';
import { html, type Html } from './escape-html.js';
import { fixed, percent, percentRange, utc } from './format.js';
import { chartFrame, ticks } from './svg-chart.js';

type F = ReportFigures;

const MODE_TEXT = {
  'per-category': 'per category (a threshold for each category)',
  marginal: 'marginal (one threshold over the whole pool)',
} as const;
const SCORE_TEXT = {
  lac: 'LAC (1 − p̂ of the category)',
  aps: 'APS (cumulative probability up to the category)',
} as const;

export function headerSection(f: F): Html {
  return html`<header>
<h1>Model report: ${f.desk.name}, version ${f.version.version}</h1>
<p class="lead">What the model of this desk promised, what it achieved on uniform random checks, and who decided what in the period it covers. Figures are fixed by the stored data; the JSON file holds the same figures.</p>
<dl class="facts">
<dt>Desk</dt><dd>${f.desk.name} (id ${f.desk.id})</dd>
<dt>Categories</dt><dd>${f.desk.categories.join(', ')}</dd>
<dt>Model version</dt><dd>${f.version.version}${f.version.parentVersion === null ? ' (the first)' : html` (follows version ${f.version.parentVersion})`}</dd>
${startedFromFact(f)}<dt>Created</dt><dd>${utc(f.version.createdAt)}</dd>
<dt>Published</dt><dd>${utc(f.version.publishedAt)}</dd>
<dt>Period covered</dt><dd>verdicts after ${utc(f.period.from)} (${f.period.startsAt === 'parent-published' ? 'publication of the previous version' : 'creation of the desk'}) up to ${utc(f.period.to)}</dd>
<dt>Coverage target</dt><dd>${percent(f.settings.coverageTarget)}, calibrated ${MODE_TEXT[f.settings.calibration]}, score ${SCORE_TEXT[f.settings.score]}</dd>
<dt>Queue</dt><dd>${percent(f.settings.randomShare)} of the items drawn uniformly at random, the rest by ${f.settings.strategy}; ${percent(f.settings.secondOpinionShare)} of decided items served again to a second reviewer</dd>
</dl>
</header>`;
}

function startedFromFact(f: F): Html {
  const s = f.version.startedFrom;
  if (!s) return html``;
  const untrained = s.untrained.length
    ? html`; not trained there, so starting untrained: ${s.untrained.join(', ')}`
    : html``;
  return html`<dt>Started from</dt><dd>version ${s.version} of desk ${s.deskName} (id ${s.deskId}): this desk's first version was that classifier, and later versions train on this desk's own verdicts with its weights as prior${untrained}</dd>
`;
}

export function coverageSection(f: F): Html {
  const c = f.coverage;
  const row = (name: string, x: F['coverage']['overall']) =>
    html`<tr><td>${name}</td><td class="num">${x.checks}</td><td class="num">${x.covered}</td><td class="num">${percent(x.coverage)}</td><td class="num">${percentRange(x.wilson)}</td><td class="num">${percentRange(x.clopperPearson)}</td></tr>`;
  const short = c.overall.clopperPearson && c.overall.clopperPearson.upper < c.promised;
  return html`<section class="keep" id="coverage">
<h2>Coverage promised and achieved</h2>
<p>Promised: the prediction set holds the right category for at least ${percent(c.promised)} of items ${c.mode === 'per-category' ? 'of each category' : 'over the pool as a whole'}. Achieved: the share of the period's random checks (verdicts on uniform random draws) whose category was in the set shown with the item${c.checkedVersions.length ? html`, under version ${c.checkedVersions.join(', ')}` : ''}.</p>
<table><thead><tr><th>Checks of</th><th class="num">checks</th><th class="num">covered</th><th class="num">realized</th><th class="num">Wilson 95 %</th><th class="num">Clopper–Pearson 95 %</th></tr></thead>
<tbody>${row('all categories', c.overall)}${c.perCategory.map((x) => row(x.category, x))}</tbody></table>
${c.overall.checks === 0 ? html`<p class="note">No random check was answered in this period, so the realized coverage cannot be stated.</p>` : ''}
${short ? html`<p class="warn">Even the top of the exact interval is below the promised coverage: the sets shown in this period held the reviewers' answer less often than promised.</p>` : ''}
<p class="note">Intervals: Wilson score and Clopper–Pearson exact, 95 % (Newcombe 1998, methods 3 and 5). Per-category rows count checks by the reviewer's category.</p>
</section>`;
}

export function countsSection(f: F): Html {
  return html`<section class="keep" id="counts">
<h2>What the version learned from</h2>
<p>Training verdicts come from every draw except uniform random ones; calibration verdicts only from uniform random draws, which never train.</p>
<table><thead><tr><th>Category</th><th class="num">training items</th><th class="num">calibration items</th></tr></thead>
<tbody>${f.desk.categories.map((c, i) => html`<tr><td>${c}</td><td class="num">${f.training.perCategory[i]?.verdicts ?? 0}</td><td class="num">${f.calibration.perCategory[i]?.verdicts ?? 0}</td></tr>`)}
<tr><th>all</th><th class="num">${f.training.total}</th><th class="num">${f.calibration.total}</th></tr></tbody></table>
<p class="note">Training items by draw: ${drawList(f.training.draws)}. Calibration items by draw: ${drawList(f.calibration.draws)}.</p>
</section>`;
}

function drawList(d: Record<string, number>): string {
  const list = Object.entries(d).map(([k, n]) => `${k} ${n}`);
  return list.length ? list.join(', ') : 'none';
}

export function poolSection(f: F): Html {
  const p = f.pool;
  if (!p)
    return html`<section id="pool"><h2>Calls over the pool</h2><p class="note">The predictions of this version were no longer stored when the report was written, so its calls over the pool cannot be stated.</p></section>`;
  return html`<section class="keep" id="pool">
<h2>Calls over the pool</h2>
<p>The ${p.items} items scored under this version (the open pool when it was scored), with their prediction sets at the target in force at publication. Mean set size ${fixed(p.meanSetSize, 2)}.</p>
<table><thead><tr><th>Call</th><th>meaning</th><th class="num">items</th><th class="num">share</th></tr></thead><tbody>
<tr><td>sure</td><td>the set holds one category</td><td class="num">${p.calls.sure.items}</td><td class="num">${percent(p.calls.sure.share)}</td></tr>
<tr><td>ambiguous</td><td>two or more categories</td><td class="num">${p.calls.ambiguous.items}</td><td class="num">${percent(p.calls.ambiguous.share)}</td></tr>
<tr><td>unfamiliar</td><td>no category: unlike anything calibrated</td><td class="num">${p.calls.unfamiliar.items}</td><td class="num">${percent(p.calls.unfamiliar.share)}</td></tr>
</tbody></table>
<h3>Set sizes</h3>
<table><thead><tr><th class="num">categories in the set</th><th class="num">items</th><th class="num">share</th></tr></thead>
<tbody>${p.setSizes.map((s) => html`<tr><td class="num">${s.size}</td><td class="num">${s.items}</td><td class="num">${percent(s.share)}</td></tr>`)}</tbody></table>
</section>`;
}

export function qualitySection(f: F): Html {
  const q = f.quality;
  if (!q)
    return html`<section id="quality"><h2>Quality on the calibration set</h2><p class="note">This version had no calibration items, so no quality figures.</p></section>`;
  return html`<section id="quality">
<h2>Quality on the calibration set</h2>
<p>On the ${q.calibrationItems} calibration items (uniform random draws the version did not train on).</p>
<table class="keep"><thead><tr><th>Figure</th><th class="num">value</th><th>reading</th></tr></thead><tbody>
<tr><td>accuracy</td><td class="num">${fixed(q.accuracy)}</td><td>share whose most probable category was the reviewer's</td></tr>
<tr><td>macro-F1</td><td class="num">${fixed(q.macroF1)}</td><td>F1 averaged over categories, each counting the same</td></tr>
<tr><td>log loss</td><td class="num">${fixed(q.logLoss)}</td><td>mean −ln p̂ of the reviewer's category (nats; lower is better)</td></tr>
<tr><td>Brier score</td><td class="num">${fixed(q.brier)}</td><td>mean squared error of the probability vector (0–2; lower is better)</td></tr>
<tr><td>expected calibration error</td><td class="num">${fixed(q.ece)}</td><td>weighted gap between confidence and accuracy over 10 bins (Guo et al. 2017)</td></tr>
</tbody></table>
<figure>${reliabilityChart(q)}<figcaption>Reliability diagram: for the calibration items in each confidence bin, the share predicted correctly (bars) against the bin's mean confidence (points); on the dashed diagonal, confidence equals accuracy. Numbers above the bars: items per bin.</figcaption></figure>
</section>`;
}

function reliabilityChart(q: NonNullable<F['quality']>): Html {
  const axis = { min: 0, max: 1, ticks: ticks(0, 1, 0.2), format: (v: number) => v.toFixed(1) };
  const c = chartFrame({
    title: 'Reliability on the calibration set',
    className: 'reliability',
    description: `Share correct per confidence bin for ${q.calibrationItems} calibration items, with the diagonal of perfect calibration.`,
    x: { ...axis, label: 'confidence: top-category probability (0–1)' },
    y: { ...axis, label: 'share correct (0–1)' },
  });
  const filled = q.reliability.filter((b) => b.count > 0 && b.accuracy !== null && b.meanConfidence !== null);
  return c.svg(
    html`<line class="diagonal" x1="${c.x(0)}" y1="${c.y(0)}" x2="${c.x(1)}" y2="${c.y(1)}"/>${filled.map((b) => html`<rect class="bar" x="${c.x(b.lower) + 1}" y="${c.y(b.accuracy!)}" width="${Math.max(1, c.x(b.upper) - c.x(b.lower) - 2)}" height="${Math.max(0.5, c.y(0) - c.y(b.accuracy!))}"><title>${`${b.lower.toFixed(1)}–${b.upper.toFixed(1)}: ${b.count} items, ${percent(b.accuracy)} correct`}</title></rect><circle class="point" cx="${c.x(b.meanConfidence!)}" cy="${c.y(b.accuracy!)}" r="3"/><text class="value" x="${(c.x(b.lower) + c.x(b.upper)) / 2}" y="${c.y(b.accuracy!) - 5}" text-anchor="middle">${b.count}</text>`)}`,
  );
}

export function learningCurveSection(f: F): Html {
  const points = f.learningCurve.filter((p) => p.macroF1 !== null);
  if (points.length === 0)
    return html`<section id="learning-curve"><h2>Learning curve</h2><p class="note">No published version has quality figures yet.</p></section>`;
  const first = points[0].version;
  const last = points[points.length - 1].version;
  const [lo, hi] = first === last ? [first - 1, last + 1] : [first, last];
  const step = Math.max(1, Math.ceil((hi - lo) / 10));
  const c = chartFrame({
    title: 'Macro-F1 by model version',
    className: 'learning-curve',
    description: `Macro-F1 on each published version's own calibration set, versions ${first} to ${last}.`,
    x: { min: lo, max: hi, ticks: ticks(lo, hi, step), label: 'model version (number)', format: (v) => String(v) },
    y: { min: 0, max: 1, ticks: ticks(0, 1, 0.2), label: 'macro-F1 (0–1)', format: (v) => v.toFixed(1) },
  });
  const line = points.map((p) => `${c.x(p.version)},${c.y(p.macroF1!)}`).join(' ');
  return html`<section id="learning-curve">
<h2>Learning curve</h2>
<figure>${c.svg(html`<polyline class="line" points="${line}"/>${points.map((p) => html`<circle class="point" cx="${c.x(p.version)}" cy="${c.y(p.macroF1!)}" r="3.5"><title>${`version ${p.version}: ${fixed(p.macroF1)}`}</title></circle><text class="value" x="${c.x(p.version)}" y="${c.y(p.macroF1!) - 7}" text-anchor="middle">${fixed(p.macroF1, 2)}</text>`)}`)}
<figcaption>Macro-F1 of each published version up to this one, each measured on its own calibration set (which grows from version to version, so the points are not measured on the same items).</figcaption></figure>
<table class="keep"><thead><tr><th class="num">version</th><th>published</th><th class="num">calibration items</th><th class="num">accuracy</th><th class="num">macro-F1</th></tr></thead>
<tbody>${f.learningCurve.map((p) => html`<tr><td class="num">${p.version}</td><td>${utc(p.publishedAt)}</td><td class="num">${p.calibrationItems}</td><td class="num">${fixed(p.accuracy)}</td><td class="num">${fixed(p.macroF1)}</td></tr>`)}</tbody></table>
</section>`;
}

export function agreementSection(f: F): Html {
  const a = f.agreement;
  const k = a.krippendorff;
  const intro = html`<p>Over the desk's items that two or more reviewers decided (second opinions), as the verdicts stood when this version was published: ${a.items} items, ${a.verdicts} category verdicts by ${a.reviewers} reviewers; ${a.abstentions} abstentions on those items count as missing values.</p>`;
  if (a.items === 0)
    return html`<section class="keep" id="agreement"><h2>Agreement between reviewers</h2>${intro}<p class="note">No item had two category verdicts yet, so agreement cannot be stated.</p></section>`;
  return html`<section id="agreement">
<h2>Agreement between reviewers</h2>
${intro}
<table class="keep"><thead><tr><th>Coefficient</th><th class="num">value</th><th>over</th></tr></thead><tbody>
<tr><td>Krippendorff's alpha (nominal)</td><td class="num">${fixed(k.alpha)}</td><td>${k.items} items, ${k.pairableValues} pairable values; ${percent(k.interval.confidence)} bootstrap interval ${fixed(k.interval.lower)} to ${fixed(k.interval.upper)} (${k.interval.resamples} resamples of items, seed ${k.interval.seed})</td></tr>
<tr><td>Fleiss' kappa</td><td class="num">${fixed(a.fleiss.kappa)}</td><td>${a.fleiss.items} items with ${a.fleiss.verdictsPerItem ?? '–'} verdicts each; ${a.fleiss.itemsLeftOut} left out</td></tr>
</tbody></table>
<p class="note">${a.fleiss.unequalVerdicts} A coefficient is shown as a dash where there is nothing to measure (for instance a single category used).</p>
${
  a.cohen.length
    ? html`<h3>Cohen's kappa per pair of reviewers</h3>
<table class="keep"><thead><tr><th>reviewers</th><th class="num">items</th><th class="num">observed agreement</th><th class="num">expected by chance</th><th class="num">kappa</th></tr></thead>
<tbody>${a.cohen.map((c) => html`<tr><td>${c.reviewers[0]} and ${c.reviewers[1]}</td><td class="num">${c.items}</td><td class="num">${percent(c.observed)}</td><td class="num">${percent(c.expected)}</td><td class="num">${fixed(c.kappa)}</td></tr>`)}</tbody></table>
<p class="note">Pairs in order of the reviewers' names; the figures describe agreement, not who is right.</p>`
    : ''
}
<h3>Per category</h3>
<table class="keep"><thead><tr><th>category</th><th class="num">verdicts</th><th class="num">items</th><th class="num">Fleiss' kappa</th></tr></thead>
<tbody>${a.perCategory.map((c) => html`<tr><td>${c.category}</td><td class="num">${c.verdicts}</td><td class="num">${c.items}</td><td class="num">${fixed(c.fleissKappa)}</td></tr>`)}</tbody></table>
</section>`;
}

export function activitySection(f: F): Html {
  const a = f.activity;
  return html`<section class="keep" id="activity">
<h2>Reviewer activity in the period</h2>
<p>${a.verdicts} verdicts. Reviewers are listed by name; the table describes the work done and does not rank people.</p>
${
  a.reviewers.length
    ? html`<table><thead><tr><th>Reviewer</th><th class="num">verdicts</th><th class="num">abstained</th><th class="num">median time per verdict</th></tr></thead>
<tbody>${a.reviewers.map((r) => html`<tr><td>${r.name}</td><td class="num">${r.verdicts}</td><td class="num">${r.abstained}</td><td class="num">${r.medianSeconds === null ? '–' : `${r.medianSeconds.toFixed(1)} s`}</td></tr>`)}</tbody></table>`
    : html`<p class="note">No verdicts in this period.</p>`
}
</section>`;
}

export function alertsSection(f: F): Html {
  const a = f.alerts;
  return html`<section class="keep" id="alerts">
<h2>Coverage alerts in the period</h2>
<p>The alert is raised when, over the last ${a.window} random checks, even the top of the Wilson 95 % interval of realized coverage is below the target then in force: the texts arriving probably differ from those the model was calibrated on.</p>
${
  a.episodes.length
    ? html`<table><thead><tr><th>raised</th><th>cleared</th><th class="num">checks</th><th class="num">realized</th><th class="num">upper bound</th><th class="num">target</th></tr></thead>
<tbody>${a.episodes.map((e) => html`<tr><td>${utc(e.raisedAt)}</td><td>${e.clearedAt ? utc(e.clearedAt) : 'still raised at the end of the period'}</td><td class="num">${e.checks}</td><td class="num">${percent(e.coverage)}</td><td class="num">${percent(e.upper)}</td><td class="num">${percent(e.target)}</td></tr>`)}</tbody></table>`
    : html`<p>No alert was raised in this period.</p>`
}
</section>`;
}

export function settingsChangesSection(f: F): Html {
  const show = (o: Record<string, unknown>) =>
    Object.entries(o).map(
      ([k, v]) => html`<div><code>${k}</code>: <span class="json">${JSON.stringify(v)}</span></div>`,
    );
  return html`<section id="settings">
<h2>Changes of settings in the period</h2>
${
  f.settingsChanges.length
    ? html`<table><thead><tr><th>when</th><th>who</th><th>before</th><th>after</th></tr></thead>
<tbody>${f.settingsChanges.map((c) => html`<tr><td>${utc(c.at)}</td><td>${c.actor}</td><td>${show(c.before)}</td><td>${show(c.after)}</td></tr>`)}</tbody></table>`
    : html`<p>No setting of the desk was changed in this period.</p>`
}
<p class="note">From the append-only audit trail.</p>
</section>`;
}

export function assumptionsSection(f: F): Html {
  return html`<section class="keep" id="assumptions">
<h2>What the coverage statement assumes</h2>
<ul>
<li>Calibration uses only verdicts on uniform random draws from the pool. Items picked because the model was unsure are not like the pool, so they never calibrate, and calibration items never train.</li>
<li>The guarantee is ${f.settings.calibration === 'per-category' ? 'per category: for items of each category, rare ones included, the set holds that category at least at the target rate, on average over the pool' : 'marginal: the set holds the right category at least at the target rate on average over the pool as a whole; a rare category may be covered less often'}. It is a statement about the pool, not about any single item.</li>
<li>It assumes the items scored are like those calibrated on (exchangeable). It does not hold for texts unlike the pool: new topics, new sources, a change in how people write. The coverage alert watches for this.</li>
<li>With n calibration items the threshold is the ⌈(n+1)(1−α)⌉-th smallest score (split conformal prediction; Vovk et al. 2005, Angelopoulos &amp; Bates 2021); with too few items the set holds every category.</li>
<li>Realized coverage on the period's random checks is itself an estimate; the intervals show its uncertainty.</li>
</ul>
</section>`;
}

export function cautionsSection(): Html {
  return html`<section class="keep cautions" id="cautions">
<h2>Cautions</h2>
<p>Cribra supports triage; it does not decide. A prediction set is a statistical statement about the pool as a whole, not a judgement about a person. Decisions about threats belong to trained people under their organisation's protocols and local law; where life may be at risk, contact emergency services. The texts may hold personal data: restrict access, keep the audit trail, follow the data-protection rules that apply.</p>
</section>`;
}
