/** The `rehearse` command's options and their validation. */
import { numberOption, UsageError, type CliValues } from '../cli-command.js';

const CALIBRATIONS = ['marginal', 'per-category'] as const;
const SCORES = ['lac', 'aps'] as const;
const STRATEGIES = ['entropy', 'margin', 'least-confidence', 'set-size', 'random'] as const;
const FORMATS = ['ndjson', 'csv', 'json'] as const;

/** The options table of `cribra rehearse`. */
export const REHEARSE_OPTIONS = {
  input: {
    type: 'string',
    value: 'FILE',
    required: true,
    description: 'labelled texts: NDJSON, CSV or a JSON array, read with the import rules (a `text` field per row)',
  },
  format: {
    type: 'string',
    value: 'FORMAT',
    choices: FORMATS,
    defaultText: "from the file's extension (.ndjson/.jsonl, .csv, .json)",
    description: 'the file format',
  },
  'label-field': {
    type: 'string',
    value: 'NAME',
    defaultText: 'label',
    description: 'the column or key holding each row’s category',
  },
  target: { type: 'string', value: 'P', defaultText: '0.9', description: 'coverage target, between 0 and 1' },
  calibration: {
    type: 'string',
    value: 'MODE',
    choices: CALIBRATIONS,
    defaultText: 'marginal; per-category with --watch',
    description: 'one threshold over the pool, or one per category (--watch needs per-category)',
  },
  score: { type: 'string', value: 'SCORE', choices: SCORES, defaultText: 'lac', description: 'nonconformity score' },
  strategy: {
    type: 'string',
    value: 'STRATEGY',
    choices: STRATEGIES,
    defaultText: 'entropy',
    description: "the desk strategy the simulated queue serves by (the service's sampling policy), or random",
  },
  'random-share': {
    type: 'string',
    value: 'P',
    defaultText: '0.2',
    description: 'share of each batch drawn at random (these calibrate, never train), 0 to 1',
  },
  start: { type: 'string', value: 'N', defaultText: '20', description: 'verdicts before the first model' },
  batch: { type: 'string', value: 'N', defaultText: '20', description: 'verdicts between two retrains' },
  budget: { type: 'string', value: 'N', defaultText: '600', description: 'verdicts in all (at least --start)' },
  'test-share': {
    type: 'string',
    value: 'P',
    defaultText: '0.2',
    description: 'share of the rows held out to measure the model, between 0 and 1',
  },
  seed: {
    type: 'string',
    value: 'N',
    defaultText: '1',
    description: 'seed of every random draw: the hold-out split, the draws, the folds (same seed, same run)',
  },
  seeds: {
    type: 'string',
    value: 'LIST',
    description:
      'run once per seed (`1-10`, `1,4,7` or both mixed) and print the medians and ranges over the runs instead of one curve; replaces --seed',
  },
  tune: {
    type: 'boolean',
    description:
      'pick the regularisation C by k-fold cross-validation (C among 0.1, 0.3, 1, 3, 10, 30; best mean macro-F1) on a uniform sample of --budget pool items, and report it; without it C = 1',
  },
  folds: {
    type: 'string',
    value: 'K',
    defaultText: '5',
    description: 'folds of the cross-validation of --tune, 2 or more',
  },
  'compare-random': {
    type: 'boolean',
    description: 'also run a queue that draws every item at random, for comparison',
  },
  'start-from': {
    type: 'string',
    value: 'MODEL.json',
    description:
      'also run the loop started from a model file (GET /api/desks/:deskId/models/:version/model.json), as a desk created with startFrom is, and print the verdicts the start saves to reach 95% of the full model’s macro-F1',
  },
  watch: {
    type: 'string',
    value: 'LIST',
    description:
      'watched categories, comma-separated (`threat` or `threat,harassment`): the queue serves the review lane as a desk does, and each point adds, per category, the share of its items decided or flagged (the promise a desk states), the recall and reading load on the open items and the true count in the cleared pile against the estimate a desk states (prediction-powered, 95% interval)',
  },
  'screen-share': {
    type: 'string',
    value: 'P',
    defaultText: '0.5 with --watch (at most 1 minus --random-share)',
    description: 'share of the leases that serve the review lane (flagged items, most likely first), 0 to 1',
  },
  'seed-terms': {
    type: 'string',
    value: 'FILE.json',
    description:
      'seed terms as a desk takes them, a JSON object {"category": ["term", …]}: with --watch, adds the keyword baseline (flag every item that matches a term) with its recall and reading load',
  },
  json: { type: 'boolean', description: 'print the figures as one JSON object instead of a table' },
} as const;

export interface RehearseFlags {
  input: string;
  format: (typeof FORMATS)[number] | undefined;
  labelField: string;
  target: number;
  calibration: (typeof CALIBRATIONS)[number];
  score: (typeof SCORES)[number];
  strategy: (typeof STRATEGIES)[number];
  randomShare: number;
  start: number;
  batch: number;
  budget: number;
  testShare: number;
  seed: number;
  /** The seeds to run: [seed] unless --seeds was given. */
  seeds: number[];
  /** True when --seeds asked for a summary over several runs. */
  multiSeed: boolean;
  tune: boolean;
  folds: number;
  compareRandom: boolean;
  /** A model file to start a second run from (`--start-from`). */
  startFrom: string | undefined;
  /** Watched categories (`--watch`), as given; checked against the file's categories once it is read. */
  watch: string[];
  /** Share of the review lane (0 without --watch). */
  screenShare: number;
  /** The seed-terms file (`--seed-terms`). */
  seedTerms: string | undefined;
  json: boolean;
}

/** Most seeds one `--seeds` list may name. */
const MAX_SEEDS = 100;

/** Parses `1-10`, `1,4,7` or a mix into distinct seeds in the given order. */
export function parseSeeds(raw: string): number[] {
  const seeds: number[] = [];
  const bad = (why: string): never => {
    throw new UsageError(
      `--seeds ${JSON.stringify(raw)}: ${why} (expected whole numbers or ranges like 1-10, comma-separated)`,
    );
  };
  for (const part of raw.split(',')) {
    const m = /^\s*(-?\d+)\s*(?:-\s*(-?\d+)\s*)?$/.exec(part);
    if (m === null) return bad(`cannot read ${JSON.stringify(part)}`);
    const upper = m[2] as string | undefined;
    const from = Number(m[1]);
    const to = upper === undefined ? from : Number(upper);
    if (!Number.isSafeInteger(from) || !Number.isSafeInteger(to)) bad('a seed is too large');
    if (to < from) bad(`the range ${from}-${to} runs backwards`);
    if (to - from + 1 + seeds.length > MAX_SEEDS) bad(`more than ${MAX_SEEDS} seeds`);
    for (let s = from; s <= to; s++) if (!seeds.includes(s)) seeds.push(s);
  }
  return seeds;
}

/** Reads `--watch`: comma-separated category names, each once. */
export function parseWatch(raw: string): string[] {
  const names = raw.split(',').map((c) => c.trim());
  if (names.some((c) => c === ''))
    throw new UsageError(`--watch ${JSON.stringify(raw)}: expected category names separated by commas`);
  const repeated = names.find((c, i) => names.indexOf(c) !== i);
  if (repeated !== undefined) throw new UsageError(`--watch names ${repeated} twice`);
  return names;
}

/** Checks the parsed options and applies the defaults; throws UsageError naming the option. */
export function rehearseFlags(values: CliValues<typeof REHEARSE_OPTIONS>): RehearseFlags {
  const fraction = { min: 0, max: 1, exclusiveMin: true, exclusiveMax: true };
  const count = { integer: true, min: 1 };
  const flags: RehearseFlags = {
    input: values.input ?? '',
    format: values.format as RehearseFlags['format'],
    labelField: values['label-field'] ?? 'label',
    target: numberOption('target', values.target, 0.9, fraction),
    calibration: (values.calibration ??
      (values.watch === undefined ? 'marginal' : 'per-category')) as RehearseFlags['calibration'],
    score: (values.score ?? 'lac') as RehearseFlags['score'],
    strategy: (values.strategy ?? 'entropy') as RehearseFlags['strategy'],
    randomShare: numberOption('random-share', values['random-share'], 0.2, { min: 0, max: 1 }),
    start: numberOption('start', values.start, 20, count),
    batch: numberOption('batch', values.batch, 20, count),
    budget: numberOption('budget', values.budget, 600, count),
    testShare: numberOption('test-share', values['test-share'], 0.2, fraction),
    seed: numberOption('seed', values.seed, 1, { integer: true }),
    seeds: [],
    multiSeed: values.seeds !== undefined,
    tune: values.tune === true,
    folds: numberOption('folds', values.folds, 5, { integer: true, min: 2 }),
    compareRandom: values['compare-random'] === true,
    startFrom: values['start-from'],
    watch: values.watch === undefined ? [] : parseWatch(values.watch),
    screenShare: 0,
    seedTerms: values['seed-terms'],
    json: values.json === true,
  };
  if (flags.input === '') throw new UsageError('--input must name a file');
  if (flags.labelField === '') throw new UsageError('--label-field must not be empty');
  if (flags.startFrom === '') throw new UsageError('--start-from must name a model file');
  if (values.seeds !== undefined && values.seed !== undefined)
    throw new UsageError('--seed and --seeds cannot both be given (--seeds runs each of its seeds)');
  flags.seeds = values.seeds === undefined ? [flags.seed] : parseSeeds(values.seeds);
  if (flags.budget < flags.start)
    throw new UsageError(`--budget (${flags.budget}) must be at least --start (${flags.start})`);
  if (flags.watch.length === 0) {
    if (values['screen-share'] !== undefined)
      throw new UsageError('--screen-share needs --watch (the review lane serves flagged items)');
    if (flags.seedTerms !== undefined)
      throw new UsageError('--seed-terms needs --watch (the keyword baseline is measured on the watched categories)');
  } else {
    if (flags.calibration !== 'per-category')
      throw new UsageError(
        '--watch needs --calibration per-category: marginal calibration promises coverage over the pool as a whole, not per category, so it cannot clear items with a stated miss rate',
      );
    flags.screenShare = numberOption('screen-share', values['screen-share'], Math.min(0.5, 1 - flags.randomShare), {
      min: 0,
      max: 1,
    });
    if (flags.randomShare + flags.screenShare > 1 + 1e-9)
      throw new UsageError(
        `--random-share (${flags.randomShare}) and --screen-share (${flags.screenShare}) may not add up to more than 1`,
      );
  }
  if (flags.seedTerms === '') throw new UsageError('--seed-terms must name a file');
  return flags;
}
