import type { ReportFigures } from './report-figures.js';

/** A small, complete set of report figures for the unit tests (invented values). */
export function sampleFigures(over: Partial<ReportFigures> = {}): ReportFigures {
  const categories = ['threat', 'harassment', 'ok'];
  const cov = (checks: number, covered: number) => ({
    checks,
    covered,
    coverage: covered / checks,
    wilson: { lower: 0.8, upper: 0.95 },
    clopperPearson: { lower: 0.79, upper: 0.96 },
  });
  return {
    format: 'cribra-model-report',
    formatVersion: 1,
    desk: { id: 1, name: 'Mossbank Commons', categories },
    version: {
      version: 3,
      parentVersion: 2,
      createdAt: '2026-03-01T10:00:00.000Z',
      publishedAt: '2026-03-01T10:00:05.000Z',
      verdictWatermark: 120,
    },
    period: { from: '2026-03-01T09:00:00.000Z', to: '2026-03-01T10:00:05.000Z', startsAt: 'parent-published' },
    settings: {
      coverageTarget: 0.9,
      calibration: 'per-category',
      score: 'lac',
      strategy: 'entropy',
      randomShare: 0.2,
      secondOpinionShare: 0.1,
    },
    training: {
      total: 80,
      perCategory: categories.map((category, i) => ({ category, verdicts: [10, 20, 50][i] })),
      draws: { seed: 30, uncertainty: 50 },
    },
    calibration: {
      total: 40,
      perCategory: categories.map((category, i) => ({ category, verdicts: [5, 10, 25][i] })),
      draws: { random: 40 },
    },
    coverage: {
      promised: 0.9,
      mode: 'per-category',
      checkedVersions: [2],
      overall: cov(40, 36),
      perCategory: categories.map((category) => ({ category, ...cov(10, 9) })),
    },
    pool: {
      items: 100,
      meanSetSize: 1.3,
      setSizes: [0, 1, 2, 3].map((size) => ({
        size,
        items: [5, 65, 25, 5][size],
        share: [0.05, 0.65, 0.25, 0.05][size],
      })),
      calls: {
        sure: { items: 65, share: 0.65 },
        ambiguous: { items: 30, share: 0.3 },
        unfamiliar: { items: 5, share: 0.05 },
      },
    },
    quality: {
      calibrationItems: 40,
      accuracy: 0.85,
      macroF1: 0.8,
      logLoss: 0.41,
      brier: 0.22,
      ece: 0.05,
      reliability: Array.from({ length: 10 }, (_, b) => ({
        lower: b / 10,
        upper: (b + 1) / 10,
        count: b < 3 ? 0 : 5,
        meanConfidence: b < 3 ? null : b / 10 + 0.05,
        accuracy: b < 3 ? null : Math.min(1, b / 10 + 0.02),
      })),
    },
    learningCurve: [1, 2, 3].map((version) => ({
      version,
      publishedAt: `2026-03-01T0${version + 6}:00:00.000Z`,
      calibrationItems: version * 12,
      macroF1: 0.5 + version * 0.1,
      accuracy: 0.6 + version * 0.08,
    })),
    agreement: {
      deskId: 1,
      items: 12,
      verdicts: 25,
      abstentions: 1,
      reviewers: 2,
      cohen: [{ reviewers: ['ash', 'rowan'], items: 12, kappa: 0.75, observed: 0.8333, expected: 0.3333 }],
      fleiss: {
        kappa: 0.74,
        observed: 0.83,
        expected: 0.35,
        items: 11,
        itemsLeftOut: 1,
        verdictsPerItem: 2,
        verdicts: 22,
        unequalVerdicts: 'Fleiss needs equal counts.',
      },
      krippendorff: {
        level: 'nominal',
        alpha: 0.76,
        observedDisagreement: 0.16,
        expectedDisagreement: 0.66,
        interval: { lower: 0.5, upper: 0.95, confidence: 0.95, resamples: 1000, seed: 1, undefinedResamples: 0 },
        items: 12,
        pairableValues: 24,
      },
      perCategory: categories.map((category) => ({ category, verdicts: 8, items: 5, fleissKappa: 0.7 })),
    },
    activity: {
      order: 'name',
      verdicts: 30,
      reviewers: [
        { name: 'ash', verdicts: 12, abstained: 1, medianSeconds: 14.5 },
        { name: 'rowan', verdicts: 18, abstained: 0, medianSeconds: 21 },
      ],
    },
    alerts: { window: 200, raisedAtEnd: false, episodes: [] },
    settingsChanges: [
      {
        at: '2026-03-01T09:30:00.000Z',
        actor: 'rowan',
        before: { coverageTarget: 0.85 },
        after: { coverageTarget: 0.9 },
      },
    ],
    prevalence: {
      asOf: '2026-03-01T10:00:06.000Z',
      modelVersion: 3,
      period: 'week',
      by: 'posted',
      method: 'PPI++ from the random verdicts and the model’s probabilities.',
      approximation: 'Random draws are uniform over the open items.',
      undated: 0,
      periods: [
        { start: '2026-02-16', items: 80, randomVerdicts: 12, decided: 5 },
        { start: '2026-02-23', items: 95, randomVerdicts: 0, decided: 2 },
      ].map((p, i) => ({
        ...p,
        perCategory: categories.map((category, j) => ({
          category,
          share: i === 1 ? null : [0.05, 0.2, 0.75][j],
          lower: i === 1 ? 0 : [0.01, 0.12, 0.64][j],
          upper: i === 1 ? 1 : [0.12, 0.3, 0.84][j],
          method: i === 1 ? ('none' as const) : ('clopper-pearson' as const),
          randomVerdicts: p.randomVerdicts,
        })),
      })),
    },
    ...over,
  };
}
