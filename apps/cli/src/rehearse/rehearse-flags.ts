/** The `rehearse` command's options and their validation. */
import { numberOption, UsageError, type CliValues } from '../cli-command.js';

const CALIBRATIONS = ['marginal', 'per-category'] as const;
const SCORES = ['lac', 'aps'] as const;
const STRATEGIES = ['entropy', 'margin', 'least-confidence', 'random'] as const;
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
    defaultText: 'marginal',
    description: 'one threshold over the pool, or one per category',
  },
  score: { type: 'string', value: 'SCORE', choices: SCORES, defaultText: 'lac', description: 'nonconformity score' },
  strategy: {
    type: 'string',
    value: 'STRATEGY',
    choices: STRATEGIES,
    defaultText: 'entropy',
    description: 'how the simulated queue picks the items it asks about',
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
    description: 'seed of every random draw (same seed, same run)',
  },
  'compare-random': {
    type: 'boolean',
    description: 'also run a queue that draws every item at random, for comparison',
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
  compareRandom: boolean;
  json: boolean;
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
    calibration: (values.calibration ?? 'marginal') as RehearseFlags['calibration'],
    score: (values.score ?? 'lac') as RehearseFlags['score'],
    strategy: (values.strategy ?? 'entropy') as RehearseFlags['strategy'],
    randomShare: numberOption('random-share', values['random-share'], 0.2, { min: 0, max: 1 }),
    start: numberOption('start', values.start, 20, count),
    batch: numberOption('batch', values.batch, 20, count),
    budget: numberOption('budget', values.budget, 600, count),
    testShare: numberOption('test-share', values['test-share'], 0.2, fraction),
    seed: numberOption('seed', values.seed, 1, { integer: true }),
    compareRandom: values['compare-random'] === true,
    json: values.json === true,
  };
  if (flags.input === '') throw new UsageError('--input must name a file');
  if (flags.labelField === '') throw new UsageError('--label-field must not be empty');
  if (flags.budget < flags.start)
    throw new UsageError(`--budget (${flags.budget}) must be at least --start (${flags.start})`);
  return flags;
}
