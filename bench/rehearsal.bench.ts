/**
 * `npm run bench:rehearsal [-- --seeds 1-10] [--budget N]`: the rehearsal on
 * SpamAssassin over several seeds (budget 600, start 20, batches of 20,
 * random share 0.2, per-category LAC sets at 0.9, entropy against uniform
 * random), with the medians and ranges `rehearse --seeds` prints and the
 * issue's targets checked. Prints one JSON object.
 */
import { parseArgs } from 'node:util';
import { prepareRehearsal, runRehearsal, summarizeSeeds, type RehearsalResult } from '../libs/learning/src/index.js';
import { countAll, createFeaturizer } from './bench-helpers.js';
import { loadSpamAssassin } from './spam-assassin.js';

const { values } = parseArgs({
  options: {
    seeds: { type: 'string', default: '1-10' },
    budget: { type: 'string', default: '600' },
    strategy: { type: 'string', default: 'entropy' },
  },
});
const bounds = values.seeds.split('-').map(Number);
const from = bounds[0];
const to = bounds.length > 1 ? bounds[1] : from;
const seeds = Array.from({ length: to - from + 1 }, (_, i) => from + i);
const budget = Number(values.budget);
const strategy = values.strategy as 'entropy' | 'margin' | 'least-confidence';
const target = 0.9;

const data = loadSpamAssassin();
const counts = countAll(createFeaturizer(), data);
const started = performance.now();
const results: RehearsalResult[] = seeds.map((seed) =>
  runRehearsal(prepareRehearsal(data, { testShare: 0.2, seed, counts }), {
    target,
    calibration: 'per-category',
    score: 'lac',
    strategy,
    randomShare: 0.2,
    start: 20,
    batch: 20,
    budget,
    testShare: 0.2,
    seed,
    compareRandom: true,
  }),
);
const summary = summarizeSeeds(results);
const perSeed = results.map((r) => ({
  seed: r.seed,
  full: Number(r.full.macroF1.toFixed(4)),
  labelsToReach95: r.labelsToReach['0.95'],
  randomLabelsToReach95: r.random!.labelsToReach['0.95'],
  openCoverage: r.curve.at(-1)!.open.perCategoryCoverage,
  holdOutCoverage: r.curve.at(-1)!.perCategoryCoverage,
  calibrationPerCategory: r.curve.at(-1)!.calibrationPerCategory,
}));
const ratio = summary.ratioToRandom!;
process.stdout.write(
  JSON.stringify(
    {
      summary,
      targets: {
        openCoverageAtLeastTargetMinus001: Object.fromEntries(
          Object.entries(summary.openCoverage).map(([c, s]) => [c, s.mean !== null && s.mean >= target - 0.01]),
        ),
        medianRatioAtMostHalf: ratio.median !== null && ratio.median <= 0.5,
        noSeedAbove11: ratio.missing === 0 && ratio.max !== null && ratio.max <= 1.1,
      },
      perSeed,
      seconds: Number(((performance.now() - started) / 1000).toFixed(1)),
    },
    null,
    2,
  ) + '\n',
);
