import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createRng, type RehearsalResult } from '#learning';
import { memoryIo } from '../cli-command.js';
import { rehearseCommand } from '../rehearse.command.js';

const dir = mkdtempSync(join(tmpdir(), 'rehearse-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const WORDS: Record<string, string[]> = {
  weather: ['rain', 'sunny', 'cloud', 'storm', 'forecast', 'wind', 'snow', 'mild'],
  sport: ['goal', 'match', 'team', 'score', 'league', 'coach', 'referee', 'season'],
  food: ['recipe', 'bread', 'soup', 'spicy', 'dinner', 'bake', 'garlic', 'salad'],
};
const SHARED = ['today', 'really', 'think', 'people', 'again', 'maybe', 'great', 'news'];

function generate(path: string, n: number, seed: number): void {
  const rng = createRng(seed);
  const pick = (xs: string[]): string => xs[Math.floor(rng.next() * xs.length)];
  const labels = Object.keys(WORDS);
  const lines: string[] = [];
  for (let i = 0; i < n; i++) {
    // A rare third class: food is 10 % of the rows.
    const label = rng.next() < 0.1 ? 'food' : labels[i % 2];
    const words = Array.from({ length: 8 }, () => (rng.next() < 0.5 ? pick(WORDS[label]) : pick(SHARED)));
    lines.push(JSON.stringify({ text: words.join(' '), topic: label, external_id: i }));
  }
  writeFileSync(path, lines.join('\n') + '\n');
}

describe('rehearse command', () => {
  const file = join(dir, 'posts.jsonl');
  generate(file, 400, 1);
  const base = [
    '--input',
    file,
    '--label-field',
    'topic',
    '--start',
    '10',
    '--batch',
    '10',
    '--budget',
    '80',
    '--seed',
    '3',
  ];

  it('prints one JSON object with the curve, the full model and labels to reach', async () => {
    const c = memoryIo();
    const code = await rehearseCommand([...base, '--json', '--compare-random', '--calibration', 'per-category'], c.io);
    // 80 verdicts, a fifth of them random after the 10 start ones: about 1 calibration verdict for the rare food
    // class, where per-category coverage 0.9 needs ⌈1/0.1⌉ − 1 = 9 of each.
    expect(c.err()).toMatch(
      /^rehearse: warning: category food \(\d+ of 320 pool items\) gets about 1 random verdicts/m,
    );
    expect(c.err()).toMatch(/needs at least 9/);
    expect(code).toBe(0);
    const result = JSON.parse(c.out()) as RehearsalResult;
    expect(result.classes).toEqual(['food', 'sport', 'weather']);
    expect(result.pool + result.test).toBe(400);
    expect(result.test).toBe(80);
    expect(result.target).toBe(0.9);
    // 10 start verdicts, then batches of 10 up to 80: points at 10, 20, …, 80.
    expect(result.curve.map((p: { labels: number }) => p.labels)).toEqual([10, 20, 30, 40, 50, 60, 70, 80]);
    for (const p of result.curve) {
      expect(p.trainLabels + p.calibrationLabels).toBe(p.labels);
      expect(Object.keys(p.perCategoryCoverage).sort()).toEqual(['food', 'sport', 'weather']);
      expect(p.coverage).toBeGreaterThanOrEqual(0);
      expect(p.coverage).toBeLessThanOrEqual(1);
    }
    // The start set trains; the random share (0.2 of each batch) calibrates.
    expect(result.curve[0]).toMatchObject({ trainLabels: 10, calibrationLabels: 0, coverage: 1, meanSetSize: 3 });
    const last = result.curve.at(-1)!;
    expect(last.calibrationLabels).toBeGreaterThan(5);
    expect(last.calibrationLabels).toBeLessThan(25);
    expect(result.full.macroF1).toBeGreaterThan(0.8);
    expect(result.random!.curve.length).toBe(result.curve.length);
    expect(Object.keys(result.labelsToReach)).toEqual(['0.95', '0.98']);
    expect(Object.keys(result.timings).sort()).toEqual(['featurizeMs', 'scoreMsMean', 'trainMsMean']);
    // Coverage on the items still open: the pool less the verdicts given so far.
    result.curve.forEach((p) => {
      expect(p.open.items).toBe(result.pool - p.labels);
      expect(Object.keys(p.open.perCategoryCoverage).sort()).toEqual(['food', 'sport', 'weather']);
    });
    // Too few food calibration verdicts: the per-category sets never leave a category out.
    expect(result.curve.every((p) => !p.setsInformative)).toBe(true);
    expect(result.randomVerdictsUntilInformative).toBeNull();
    expect(result.warnings.length).toBeGreaterThan(0);
    expect((result as RehearsalResult & { sentence: string }).sentence).toMatch(
      /^A desk like this needs .* verdicts to reach 95 % of the full model's macro-F1, and more than 80 random verdicts \(not reached within the budget\) before per-category sets at 0.9 stop holding every category/,
    );
  });

  it('runs several seeds with --seeds, tunes C by cross-validation with --tune, and prints medians and ranges', async () => {
    const c = memoryIo();
    const args = [...base.slice(0, -2), '--seeds', '1-2,5', '--tune', '--folds', '2'];
    expect(await rehearseCommand([...args, '--json'], c.io)).toBe(0);
    const out = JSON.parse(c.out()) as {
      runs: RehearsalResult[];
      summary: { seeds: number[]; labelsToReach95: { median: number | null }; sentence: string };
      tuning: { seed: number; c: number; folds: number; scores: { c: number }[] }[];
    };
    expect(out.runs.map((r) => r.seed)).toEqual([1, 2, 5]);
    expect(out.summary.seeds).toEqual([1, 2, 5]);
    expect(out.summary.sentence).toMatch(/median over 3 seeds/);
    expect(out.tuning.map((t) => t.seed)).toEqual([1, 2, 5]);
    for (const [i, t] of out.tuning.entries()) {
      expect(t.folds).toBe(2);
      expect(t.scores.map((s) => s.c)).toEqual([0.1, 0.3, 1, 3, 10, 30]);
      expect(out.runs[i].c).toBe(t.c);
    }
    const table = memoryIo();
    expect(await rehearseCommand([...base.slice(0, -2), '--seeds', '1,2'], table.io)).toBe(0);
    expect(table.out()).toMatch(/median \(lowest–highest\) over the seeds/);
    expect(table.out()).toMatch(/coverage of food: open /);
    expect(table.out()).toMatch(/A desk like this needs/);
  });

  it('describes every option in --help', async () => {
    const c = memoryIo();
    expect(await rehearseCommand(['--help'], c.io)).toBe(0);
    for (const option of [
      'input',
      'target',
      'strategy',
      'seed',
      'seeds',
      'tune',
      'folds',
      'compare-random',
      'watch',
      'screen-share',
      'seed-terms',
      'json',
    ])
      expect(c.out()).toMatch(new RegExp(`--${option}\\b`));
  });

  it('is reproducible for a seed', async () => {
    const a = memoryIo();
    const b = memoryIo();
    await rehearseCommand([...base, '--json'], a.io);
    await rehearseCommand([...base, '--json'], b.io);
    const strip = (s: string) => {
      const r = JSON.parse(s);
      delete r.timings;
      return r;
    };
    expect(strip(a.out())).toEqual(strip(b.out()));
  });

  it('prints a table and a progress bar without --json', async () => {
    const c = memoryIo();
    expect(await rehearseCommand([...base, '--score', 'aps'], c.io)).toBe(0);
    expect(c.out()).toMatch(/macro-F1/);
    expect(c.out()).toMatch(/full pool model: accuracy/);
    expect(c.err()).toMatch(/\[#+-*\] \d+\/\d+/);
  });

  it('reads rows with the import rules: rejected rows listed with their numbers, duplicates counted', async () => {
    const mixed = join(dir, 'mixed.jsonl');
    writeFileSync(
      mixed,
      [
        ...Array.from({ length: 6 }, (_, i) => JSON.stringify({ text: `rain and wind ${i}`, topic: 'weather' })),
        ...Array.from({ length: 6 }, (_, i) => JSON.stringify({ text: `goal and match ${i}`, topic: 'sport' })),
        '{"text": oops}',
        '{"text":"   ","topic":"sport"}',
        '{"text":"no label here"}',
        '{"text":"RAIN and  wind 0","topic":"weather"}',
      ].join('\n') + '\n',
    );
    const c = memoryIo();
    const code = await rehearseCommand(
      ['--input', mixed, '--label-field', 'topic', '--start', '4', '--batch', '2', '--budget', '8', '--json'],
      c.io,
    );
    expect(code).toBe(0);
    expect(c.err()).toMatch(/row 13: /);
    expect(c.err()).toMatch(/row 14: empty text/);
    expect(c.err()).toMatch(/row 15: missing label 'topic'/);
    expect(c.err()).toMatch(/12 of 16 rows used \(3 rejected, 1 duplicates\)/);
    expect(JSON.parse(c.out()).input).toEqual({ format: 'ndjson', rows: 16, used: 12, rejected: 3, duplicates: 1 });
  });

  it('reads CSV and JSON arrays as an import does', async () => {
    const rows = Array.from({ length: 40 }, (_, i) => ({
      text: i % 2 ? `storm and snow forecast ${i}` : `league match and coach ${i}`,
      topic: i % 2 ? 'weather' : 'sport',
    }));
    const csv = join(dir, 'posts.csv');
    writeFileSync(csv, 'text,topic\r\n' + rows.map((r) => `"${r.text}",${r.topic}`).join('\r\n') + '\r\n');
    const json = join(dir, 'posts.json');
    writeFileSync(json, JSON.stringify(rows));
    const args = ['--label-field', 'topic', '--start', '4', '--batch', '4', '--budget', '12', '--json'];
    for (const [file, format] of [
      [csv, 'csv'],
      [json, 'json'],
    ]) {
      const c = memoryIo();
      expect(await rehearseCommand(['--input', file, ...args], c.io), c.err()).toBe(0);
      expect(JSON.parse(c.out()).input).toEqual({ format, rows: 40, used: 40, rejected: 0, duplicates: 0 });
    }
    const unknown = join(dir, 'posts.txt');
    writeFileSync(unknown, 'text\n');
    const c = memoryIo();
    expect(await rehearseCommand(['--input', unknown], c.io)).toBe(2);
    expect(c.err()).toMatch(/add --format ndjson, csv or json/);
    const broken = join(dir, 'broken.json');
    writeFileSync(broken, '{"text": "not an array"}');
    const b = memoryIo();
    expect(await rehearseCommand(['--input', broken], b.io)).toBe(1);
    expect(b.err()).toMatch(/broken\.json: .*array/);
  });

  it('says so when no row has a label or all have one class', async () => {
    const missing = join(dir, 'missing.jsonl');
    writeFileSync(missing, '{"text":"a"}\n{"text":"b"}\n');
    const c1 = memoryIo();
    expect(await rehearseCommand(['--input', missing, '--label-field', 'topic'], c1.io)).toBe(1);
    expect(c1.err()).toMatch(/row 2: missing label 'topic'/);
    expect(c1.err()).toMatch(/holds no usable rows \(2 read, 2 rejected\)/);
    const one = join(dir, 'one.jsonl');
    writeFileSync(one, '{"text":"a","topic":"x"}\n{"text":"b","topic":"x"}\n');
    const c2 = memoryIo();
    expect(await rehearseCommand(['--input', one, '--label-field', 'topic'], c2.io)).toBe(1);
    expect(c2.err()).toMatch(/only one class \("x"\)/);
    const field = memoryIo();
    expect(await rehearseCommand(['--input', one, '--label-field', 'text'], field.io)).toBe(2);
    expect(field.err()).toMatch(/names an item field/);
  });

  it('names the flag in errors about bad values', async () => {
    const cases: [string[], RegExp][] = [
      [['--target', '1.5'], /--target "1.5": expected a number strictly between 0 and 1/],
      [['--calibration', 'both'], /--calibration "both": expected one of marginal, per-category/],
      [['--strategy', 'greedy'], /--strategy "greedy": expected one of/],
      [['--batch', '0'], /--batch "0": expected a whole number from 1/],
      [['--random-share', 'abc'], /--random-share "abc": expected a number from 0 to 1/],
      [['--budget', '5'], /--budget \(5\) must be at least --start \(10\)/],
      [['--colour', 'red'], /unknown option --colour/],
      [['--text-field', 'body'], /unknown option --text-field/],
      [['--seeds', '5-1'], /--seeds "5-1": the range 5-1 runs backwards/],
      [['--seeds', 'a'], /--seeds "a": cannot read "a"/],
      [['--folds', '1'], /--folds "1": expected a whole number from 2/],
      [['--seeds', '1-3', '--seed', '2'], /--seed and --seeds cannot both be given/],
    ];
    const minimal = ['--input', file, '--start', '10'];
    for (const [extra, message] of cases) {
      const c = memoryIo();
      expect(await rehearseCommand([...minimal, ...extra], c.io)).toBe(2);
      expect(c.err()).toMatch(message);
    }
    const twice = memoryIo();
    expect(await rehearseCommand([...base, '--seed', '4'], twice.io)).toBe(2);
    expect(twice.err()).toMatch(/--seed is given 2 times/);
    const c = memoryIo();
    expect(await rehearseCommand(['--json'], c.io)).toBe(2);
    expect(c.err()).toMatch(/--input is required/);
    const n = memoryIo();
    expect(await rehearseCommand(['--input', join(dir, 'nope.jsonl')], n.io)).toBe(1);
    expect(n.err()).toMatch(/cannot read/);
  });

  describe('--watch and --seed-terms', () => {
    const seedFile = join(dir, 'seed-terms.json');
    writeFileSync(seedFile, JSON.stringify({ food: ['soup', 'bake*'] }));
    const watchArgs = [...base, '--watch', 'food', '--random-share', '0.5'];

    it('prints the screening of the watched category at each point and at the end', async () => {
      const c = memoryIo();
      expect(await rehearseCommand([...watchArgs, '--seed-terms', seedFile], c.io)).toBe(0);
      const out = c.out();
      expect(out).toMatch(/screening of the watched categories on the open items, at each point:/);
      expect(out).toMatch(
        /caught food +recall food +load food +cleared food +estimate food \[95%\] +keywords recall food +keywords load/,
      );
      expect(out).toMatch(
        /at the end \(80 verdicts\):\n {2}food: caught [\d.]+% of its \d+ items \(\d+ decided\), recall [\d.]+% of its \d+ open items, load [\d.]+%; the \d+ cleared items hold \d+, estimated .* the interval; keyword baseline: recall [\d.]+%, load [\d.]+%/,
      );
    });

    it('gives each point its screening with --json, consistent with the open items', async () => {
      const c = memoryIo();
      expect(await rehearseCommand([...watchArgs, '--json'], c.io)).toBe(0);
      const result = JSON.parse(c.out()) as RehearsalResult;
      expect(result.calibration).toBe('per-category');
      for (const p of result.curve) {
        const s = p.screening!;
        expect(s.open).toBe(p.open.items);
        expect(s.flagged + s.cleared).toBe(s.open);
        expect(Object.keys(s.perCategory)).toEqual(['food']);
        const f = s.perCategory.food;
        expect(f.keywordBaseline).toBeUndefined();
        expect(f.cleared).toBe(Math.round(f.open * (1 - (f.recall ?? 1))));
        expect(f.clearedEstimate.lower).toBeLessThanOrEqual(f.clearedEstimate.upper);
        expect(f.inInterval).toBe(f.clearedEstimate.lower <= f.cleared && f.cleared <= f.clearedEstimate.upper);
      }
      expect(result.screening).toEqual(result.curve.at(-1)!.screening);
    });

    it('refuses an unknown category, a marginal desk and a bad seed-terms file, each with its reason', async () => {
      const usage: Array<[string[], RegExp]> = [
        [['--watch', 'drink'], /--watch: drink is not a category of .* \(its categories: food, sport, weather\)/],
        [['--watch', 'food,,sport'], /--watch "food,,sport": expected category names separated by commas/],
        [['--watch', 'food', '--calibration', 'marginal'], /--watch needs --calibration per-category/],
        [['--seed-terms', seedFile], /--seed-terms needs --watch/],
        [['--watch', 'food', '--screen-share', '0.9'], /may not add up to more than 1/],
      ];
      for (const [extra, message] of usage) {
        const c = memoryIo();
        expect(await rehearseCommand([...base, ...extra], c.io)).toBe(2);
        expect(c.err()).toMatch(message);
      }
      const malformed = join(dir, 'malformed.json');
      writeFileSync(malformed, '{"food": ["soup",');
      const unknown = join(dir, 'unknown.json');
      writeFileSync(unknown, JSON.stringify({ drink: ['tea'], food: 'soup' }));
      const input: Array<[string, RegExp]> = [
        [join(dir, 'missing.json'), /--seed-terms .*missing\.json: cannot read it/],
        [malformed, /--seed-terms .*malformed\.json: not JSON/],
        [unknown, /seedTerms\.drink: not a category of this desk; seedTerms\.food: expected a list of strings/],
      ];
      for (const [file, message] of input) {
        const c = memoryIo();
        expect(await rehearseCommand([...base, '--watch', 'food', '--seed-terms', file], c.io)).toBe(1);
        expect(c.err()).toMatch(message);
      }
    });
  });
});
