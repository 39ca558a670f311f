import type { RehearsalResult } from '#learning';

const pct = (x: number): string => `${(100 * x).toFixed(1)}%`;

/** A plain-text table of the learning curve and the summary lines. */
export function formatRehearsal(result: RehearsalResult): string {
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
    ...result.classes.map((c) => `cov ${c}`),
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
  lines.push(
    `timings: featurise ${result.timings.featurizeMs.toFixed(0)} ms, train ${result.timings.trainMsMean.toFixed(0)} ms a model, score ${result.timings.scoreMsMean.toFixed(0)} ms a pass`,
  );
  return lines.join('\n') + '\n';
}

/** A one-line progress bar for stderr. */
export function progressBar(done: number, total: number, width = 30): string {
  const filled = Math.round((width * done) / Math.max(1, total));
  return `\r[${'#'.repeat(filled)}${'-'.repeat(width - filled)}] ${done}/${total}`;
}
