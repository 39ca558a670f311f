/** Parsing and validation of the `rehearse` command's flags. */

export interface RehearseFlags {
  input: string;
  textField: string;
  labelField: string;
  target: number;
  calibration: 'marginal' | 'per-category';
  score: 'lac' | 'aps';
  strategy: 'entropy' | 'margin' | 'least-confidence' | 'random';
  randomShare: number;
  start: number;
  batch: number;
  budget: number;
  testShare: number;
  seed: number;
  compareRandom: boolean;
  json: boolean;
}

export class UsageError extends Error {}

export const REHEARSE_USAGE = `usage: cribra rehearse --input FILE.jsonl [--text-field text] [--label-field label]
  [--target 0.9] [--calibration marginal|per-category] [--score lac|aps]
  [--strategy entropy|margin|least-confidence|random] [--random-share 0.2]
  [--start 20] [--batch 20] [--budget 600] [--test-share 0.2] [--seed 1]
  [--compare-random] [--json]`;

const VALUE_FLAGS = new Set([
  'input',
  'text-field',
  'label-field',
  'target',
  'calibration',
  'score',
  'strategy',
  'random-share',
  'start',
  'batch',
  'budget',
  'test-share',
  'seed',
]);
const BOOLEAN_FLAGS = new Set(['compare-random', 'json']);

function number(flag: string, raw: string, check: (n: number) => boolean, rule: string): number {
  const n = Number(raw);
  if (raw.trim() === '' || !Number.isFinite(n) || !check(n))
    throw new UsageError(`--${flag} must be ${rule}, got ${JSON.stringify(raw)}`);
  return n;
}

function choice<T extends string>(flag: string, raw: string, options: readonly T[]): T {
  if (!(options as readonly string[]).includes(raw))
    throw new UsageError(`--${flag} must be one of ${options.join(', ')}, got ${JSON.stringify(raw)}`);
  return raw as T;
}

/** Parses `--flag value`, `--flag=value` and boolean `--flag`; throws UsageError naming the flag. */
export function parseRehearseFlags(argv: readonly string[]): RehearseFlags {
  const values = new Map<string, string>();
  const booleans = new Set<string>();
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!arg.startsWith('--')) throw new UsageError(`unexpected argument ${JSON.stringify(arg)}`);
    const eq = arg.indexOf('=');
    const name = eq < 0 ? arg.slice(2) : arg.slice(2, eq);
    if (BOOLEAN_FLAGS.has(name)) {
      if (eq >= 0) throw new UsageError(`--${name} takes no value`);
      booleans.add(name);
      continue;
    }
    if (!VALUE_FLAGS.has(name)) throw new UsageError(`unknown flag --${name}`);
    let value: string | undefined;
    if (eq >= 0) value = arg.slice(eq + 1);
    else {
      value = argv.at(i + 1);
      if (value === undefined || value.startsWith('--')) throw new UsageError(`--${name} needs a value`);
      i++;
    }
    if (values.has(name)) throw new UsageError(`--${name} given twice`);
    values.set(name, value);
  }
  const input = values.get('input');
  if (input === undefined || input === '') throw new UsageError('--input FILE.jsonl is required');
  const get = (name: string, fallback: string): string => values.get(name) ?? fallback;
  const integer = (flag: string, fallback: string, min: number): number =>
    number(flag, get(flag, fallback), (n) => Number.isInteger(n) && n >= min, `an integer ≥ ${min}`);
  const flags: RehearseFlags = {
    input,
    textField: get('text-field', 'text'),
    labelField: get('label-field', 'label'),
    target: number('target', get('target', '0.9'), (n) => n > 0 && n < 1, 'a number strictly between 0 and 1'),
    calibration: choice('calibration', get('calibration', 'marginal'), ['marginal', 'per-category'] as const),
    score: choice('score', get('score', 'lac'), ['lac', 'aps'] as const),
    strategy: choice('strategy', get('strategy', 'entropy'), [
      'entropy',
      'margin',
      'least-confidence',
      'random',
    ] as const),
    randomShare: number('random-share', get('random-share', '0.2'), (n) => n >= 0 && n <= 1, 'a number from 0 to 1'),
    start: integer('start', '20', 1),
    batch: integer('batch', '20', 1),
    budget: integer('budget', '600', 1),
    testShare: number(
      'test-share',
      get('test-share', '0.2'),
      (n) => n > 0 && n < 1,
      'a number strictly between 0 and 1',
    ),
    seed: number('seed', get('seed', '1'), (n) => Number.isSafeInteger(n), 'an integer'),
    compareRandom: booleans.has('compare-random'),
    json: booleans.has('json'),
  };
  if (flags.textField === '') throw new UsageError('--text-field must not be empty');
  if (flags.labelField === '') throw new UsageError('--label-field must not be empty');
  if (flags.budget < flags.start)
    throw new UsageError(`--budget (${flags.budget}) must be at least --start (${flags.start})`);
  return flags;
}
