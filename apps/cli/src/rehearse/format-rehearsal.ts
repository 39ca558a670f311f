import type { MultiSeedSummary, RehearsalResult, ScreeningFigures, Spread, TuneCResult } from '#learning';

const pct = (x: number): string => `${(100 * x).toFixed(1)}%`;

/** Why the two coverage figures differ, in one line. */
export const COVERAGE_EXPLANATION =
  'open: the items still without a verdict at each point, the population a desk shows sets on (primary); ' +
  'hold-out: rows never drawn, which still hold the hard items uncertainty sampling takes out of the open pool, ' +
  'so under uncertainty sampling it reads lower; under random draws both estimate the same coverage and differ by sampling noise only.';

function tuningLine(t: TuneCResult): string {
  return `C = ${t.c} by ${t.folds}-fold cross-validation (mean macro-F1: ${t.scores
    .map((s) => `C ${s.c} ${s.macroF1.toFixed(3)}`)
    .join(', ')})`;
}

/** A plain-text table of the learning curve and the summary lines. */
export function formatRehearsal(result: RehearsalResult, summary?: MultiSeedSummary, tuning?: TuneCResult): string {
  const lines: string[] = [];
  lines.push(
    `classes: ${result.classes.join(', ')}   pool: ${result.pool}   test: ${result.test}   target coverage: ${pct(result.target)}`,
  );
  lines.push('');
  const header = [
    'labels',
    'train',
    'calib',
    'accuracy',
    'macro-F1',
    'coverage',
    'set size',
    'sure',
    'unfamiliar',
    'open',
    ...result.classes.map((c) => `open ${c}`),
    ...result.classes.map((c) => `hold-out ${c}`),
  ];
  const rows = result.curve.map((p, i) => [
    String(p.labels),
    String(p.trainLabels),
    String(p.calibrationLabels),
    p.accuracy.toFixed(3),
    p.macroF1.toFixed(3),
    pct(p.coverage),
    p.meanSetSize.toFixed(2),
    pct(p.sureShare),
    pct(p.unfamiliarShare),
    Number.isNaN(p.open.coverage) ? '–' : pct(p.open.coverage),
    ...result.classes.map((c) => {
      const v = p.open.perCategoryCoverage[c];
      return v === null ? '–' : pct(v);
    }),
    ...result.classes.map((c) => {
      const v = p.perCategoryCoverage[c];
      return v === null ? '–' : pct(v);
    }),
    ...(result.random ? [result.random.curve[i] ? result.random.curve[i].macroF1.toFixed(3) : ''] : []),
  ]);
  if (result.random) header.push('random F1');
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  const fmt = (cells: string[]): string => cells.map((c, j) => c.padStart(widths[j])).join('  ');
  lines.push(fmt(header));
  for (const r of rows) lines.push(fmt(r));
  lines.push('');
  lines.push(
    `full pool model: accuracy ${result.full.accuracy.toFixed(3)}, macro-F1 ${result.full.macroF1.toFixed(3)}`,
  );
  const reach = (r: { '0.95': number | null; '0.98': number | null }): string =>
    `95% of full macro-F1 at ${r['0.95'] ?? 'not reached'}, 98% at ${r['0.98'] ?? 'not reached'}`;
  lines.push(`uncertainty run: ${reach(result.labelsToReach)}`);
  if (result.random) lines.push(`random run:      ${reach(result.random.labelsToReach)}`);
  lines.push(`coverage columns: ${COVERAGE_EXPLANATION}`);
  lines.push(`C = ${result.c}${tuning ? `, ${tuningLine(tuning)}` : ''}`);
  if (summary) lines.push(summary.sentence);
  lines.push(
    `timings: featurise ${result.timings.featurizeMs.toFixed(0)} ms, train ${result.timings.trainMsMean.toFixed(0)} ms a model, score ${result.timings.scoreMsMean.toFixed(0)} ms a pass`,
  );
  return lines.join('\n') + '\n';
}

const count = (x: number | null): string => (x === null ? '–' : x < 10 ? String(+x.toFixed(1)) : String(Math.round(x)));
const share = (x: number | null): string => (x === null ? '–' : pct(x));

/** What the cleared-pile columns and lines mean, in one line. */
export const SCREENING_EXPLANATION =
  'flagged: open items whose set holds a watched category; cleared: the others. caught: share of the category’s ' +
  'items (decided and open) that reviewers decided or the sets flag, the promise a desk states; recall: share of its ' +
  'open items flagged, lower when the review lane has taken the likeliest ones; load: share of the open items whose set holds it; cleared: its items the cleared pile ' +
  'really holds, beside the estimate a desk states (95% interval, from the quarter of the random verdicts held out ' +
  'of its threshold and the model’s probabilities over the pile); keywords: flagging every item that matches a seed term.';

function estimateText(f: ScreeningFigures['perCategory'][string]): string {
  const e = f.clearedEstimate;
  return `${count(e.estimate)} [${count(e.lower)}–${count(e.upper)}]`;
}

/** One line per watched category of the screening at a point (the end of a run). */
function screeningLines(figures: ScreeningFigures, prefix: string): string[] {
  const lines: string[] = [];
  for (const [c, f] of Object.entries(figures.perCategory)) {
    const e = f.clearedEstimate;
    const how =
      e.method === 'ppi++'
        ? `prediction-powered, from ${e.randomVerdicts} held-out random verdicts in the pile`
        : e.method === 'clopper-pearson'
          ? `Clopper–Pearson from ${e.randomVerdicts} held-out random verdicts in the pile alone`
          : e.method === 'none'
            ? 'no held-out random verdict in the pile: bounds 0 and the pile'
            : 'the pile is empty';
    const keywords = f.keywordBaseline
      ? `; keyword baseline: recall ${share(f.keywordBaseline.recall)}, load ${pct(f.keywordBaseline.load)}`
      : '';
    lines.push(
      `${prefix}${c}: caught ${share(f.caught)} of its ${f.decided + f.open} items (${f.decided} decided), recall ${share(f.recall)} of its ${f.open} open items, load ${pct(f.load)}; the ${figures.cleared} cleared items hold ${f.cleared}, estimated ${estimateText(f)} (${how}): ${f.inInterval ? 'inside' : 'outside'} the interval${keywords}`,
    );
  }
  return lines;
}

/**
 * `rehearse --watch`: for one run, a table of the screening at each curve point and the figures at the end; for
 * several seeds, the figures at the end of each and how many intervals held the true count.
 */
export function formatScreening(results: readonly RehearsalResult[]): string {
  const first = results[0];
  if (results.length === 0 || !first.screening) return '';
  const watched = Object.keys(first.screening.perCategory);
  const keywords = first.screening.keywordBaseline !== undefined;
  const lines: string[] = [''];
  if (results.length === 1) {
    lines.push('screening of the watched categories on the open items, at each point:');
    const header = [
      'labels',
      'open',
      'flagged',
      'load',
      ...watched.flatMap((c) => [
        `caught ${c}`,
        `recall ${c}`,
        `load ${c}`,
        `cleared ${c}`,
        `estimate ${c} [95%]`,
        ...(keywords ? [`keywords recall ${c}`] : []),
      ]),
      ...(keywords ? ['keywords load'] : []),
    ];
    const rows = first.curve.map((p) => {
      const s = p.screening!;
      return [
        String(p.labels),
        String(s.open),
        String(s.flagged),
        pct(s.load),
        ...watched.flatMap((c) => {
          const f = s.perCategory[c];
          return [
            share(f.caught),
            share(f.recall),
            pct(f.load),
            String(f.cleared),
            estimateText(f),
            ...(keywords ? [share(f.keywordBaseline?.recall ?? null)] : []),
          ];
        }),
        ...(keywords ? [pct(s.keywordBaseline!.load)] : []),
      ];
    });
    const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
    const fmt = (cells: string[]): string => cells.map((c, j) => c.padStart(widths[j])).join('  ');
    lines.push(fmt(header));
    for (const r of rows) lines.push(fmt(r));
    lines.push(`at the end (${first.curve.at(-1)!.labels} verdicts):`);
    lines.push(...screeningLines(first.screening, '  '));
  } else {
    lines.push('screening of the watched categories at the end of each run:');
    for (const r of results) if (r.screening) lines.push(...screeningLines(r.screening, `  seed ${r.seed}, `));
    for (const c of watched) {
      const held = results.filter((r) => r.screening?.perCategory[c]?.inInterval).length;
      lines.push(`  ${c}: the interval held the cleared pile's true count in ${held} of ${results.length} runs`);
    }
  }
  lines.push(`screening: ${SCREENING_EXPLANATION}`);
  return lines.join('\n') + '\n';
}

/**
 * `rehearse --start-from`: the run started from the exported model beside the one started cold (one line each per
 * seed), and the verdicts the start saved.
 */
export function formatTransfer(results: readonly RehearsalResult[]): string {
  const lines: string[] = [];
  for (const r of results) {
    const t = r.startFrom;
    if (!t) continue;
    const seed = results.length > 1 ? `seed ${r.seed}: ` : '';
    const at = (n: number | null): string => (n === null ? 'not reached' : `${n} verdicts`);
    const saved = t.verdictsSaved['0.95'];
    lines.push(
      `${seed}started from version ${t.source.version} of desk ${t.source.deskName} (id ${t.source.deskId}): macro-F1 ${t.curve[0].macroF1.toFixed(3)} before the first verdict`,
    );
    if (t.untrained.length) lines.push(`  untrained at the start (not in the model): ${t.untrained.join(', ')}`);
    if (t.dropped.length) lines.push(`  left out (not in the data): ${t.dropped.join(', ')}`);
    lines.push(
      `  95% of the full model's macro-F1 (${(0.95 * r.full.macroF1).toFixed(3)}): with the start ${at(t.labelsToReach['0.95'])}, without ${at(r.labelsToReach['0.95'])}`,
    );
    lines.push(
      saved === null
        ? `  verdicts saved: unknown (${t.labelsToReach['0.95'] === null ? 'the run with the start' : 'the run without it'} did not reach it within the budget)`
        : `  verdicts saved: ${saved}`,
    );
  }
  return lines.length ? lines.join('\n') + '\n' : '';
}

/** A one-line progress bar for stderr. */
export function progressBar(done: number, total: number, width = 30): string {
  const filled = Math.round((width * done) / Math.max(1, total));
  return `\r[${'#'.repeat(filled)}${'-'.repeat(width - filled)}] ${done}/${total}`;
}

function range(s: Spread, digits: number, asPct = false): string {
  const f = (x: number | null): string => (x === null ? '–' : asPct ? pct(x) : x.toFixed(digits));
  const missing = s.missing > 0 ? `, ${s.missing} not reached` : '';
  return `${f(s.median)} (${f(s.min)}–${f(s.max)}${missing})`;
}

/** Per-seed lines and the medians and ranges over the seeds (`rehearse --seeds`). */
export function formatSeeds(
  results: readonly RehearsalResult[],
  summary: MultiSeedSummary,
  tuning: readonly (TuneCResult & { seed: number })[],
): string {
  const first = results[0];
  const classes = first.classes;
  const lines: string[] = [];
  lines.push(
    `classes: ${classes.join(', ')}   pool: ${first.pool}   test: ${first.test}   target coverage: ${pct(first.target)}   seeds: ${summary.seeds.join(', ')}`,
  );
  lines.push('');
  const header = [
    'seed',
    'C',
    'full F1',
    'to 95%',
    ...(first.random ? ['random to 95%'] : []),
    'random verdicts until informative',
    ...classes.map((c) => `open ${c}`),
    ...classes.map((c) => `hold-out ${c}`),
  ];
  const cov = (v: number | null): string => (v === null ? '–' : pct(v));
  const rows = results.map((r) => {
    const last = r.curve.at(-1)!;
    return [
      String(r.seed),
      String(r.c),
      r.full.macroF1.toFixed(3),
      String(r.labelsToReach['0.95'] ?? '–'),
      ...(first.random ? [String(r.random?.labelsToReach['0.95'] ?? '–')] : []),
      String(r.randomVerdictsUntilInformative ?? '–'),
      ...classes.map((c) => cov(last.open.perCategoryCoverage[c])),
      ...classes.map((c) => cov(last.perCategoryCoverage[c])),
    ];
  });
  const widths = header.map((h, j) => Math.max(h.length, ...rows.map((r) => r[j].length)));
  const fmt = (cells: string[]): string => cells.map((c, j) => c.padStart(widths[j])).join('  ');
  lines.push(fmt(header));
  for (const r of rows) lines.push(fmt(r));
  lines.push('');
  lines.push('median (lowest–highest) over the seeds, at the last point for coverage:');
  lines.push(`  full pool model macro-F1: ${range(summary.fullMacroF1, 3)}`);
  lines.push(`  verdicts to reach 95% of it: ${range(summary.labelsToReach95, 0)}`);
  if (summary.randomLabelsToReach95 && summary.ratioToRandom) {
    lines.push(`  random draws to reach 95% of it: ${range(summary.randomLabelsToReach95, 0)}`);
    lines.push(`  ratio to random, per seed: ${range(summary.ratioToRandom, 2)}`);
  }
  lines.push(
    `  random verdicts before the sets can leave a category out: ${range(summary.randomVerdictsUntilInformative, 0)}`,
  );
  for (const c of classes) {
    const mean = (x: number | null): string => (x === null ? '–' : pct(x));
    lines.push(
      `  coverage of ${c}: open ${range(summary.openCoverage[c], 3, true)}, mean ${mean(summary.openCoverage[c].mean)}; hold-out ${range(summary.holdOutCoverage[c], 3, true)}, mean ${mean(summary.holdOutCoverage[c].mean)}; fewest calibration verdicts ${summary.fewestCalibrationVerdicts[c]}`,
    );
  }
  if (tuning.length > 0)
    lines.push(`  C by cross-validation: ${tuning.map((t) => `seed ${t.seed} C ${t.c}`).join(', ')}`);
  lines.push(`coverage: ${COVERAGE_EXPLANATION}`);
  lines.push(summary.sentence);
  return lines.join('\n') + '\n';
}
