import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createRng, type RehearsalResult } from '#learning';
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
    lines.push(JSON.stringify({ body: words.join(' '), topic: label, id: i }));
  }
  writeFileSync(path, lines.join('\n') + '\n');
}

function capture(): {
  io: { stdout: { write(s: string): boolean }; stderr: { write(s: string): boolean } };
  out: () => string;
  err: () => string;
} {
  let out = '';
  let err = '';
  return {
    io: { stdout: { write: (s: string) => ((out += s), true) }, stderr: { write: (s: string) => ((err += s), true) } },
    out: () => out,
    err: () => err,
  };
}

describe('rehearse command', () => {
  const file = join(dir, 'posts.jsonl');
  generate(file, 400, 1);
  const base = [
    '--input',
    file,
    '--text-field',
    'body',
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
    const c = capture();
    const code = await rehearseCommand([...base, '--json', '--compare-random', '--calibration', 'per-category'], c.io);
    expect(c.err()).toBe('');
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
  });

  it('is reproducible for a seed', async () => {
    const a = capture();
    const b = capture();
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
    const c = capture();
    expect(await rehearseCommand([...base, '--score', 'aps'], c.io)).toBe(0);
    expect(c.out()).toMatch(/macro-F1/);
    expect(c.out()).toMatch(/full pool model: accuracy/);
    expect(c.err()).toMatch(/\[#+-*\] \d+\/\d+/);
  });

  it('stops at a bad line with its number and reason', async () => {
    const bad = join(dir, 'bad.jsonl');
    writeFileSync(bad, '{"body":"a","topic":"x"}\n\n{"body":"b","topic":"y"}\n{"body": oops}\n');
    const c = capture();
    expect(await rehearseCommand(['--input', bad, '--text-field', 'body', '--label-field', 'topic'], c.io)).toBe(1);
    expect(c.err()).toMatch(/line 4: not valid JSON/);
  });

  it('says so when the label field is missing or has one class', async () => {
    const missing = join(dir, 'missing.jsonl');
    writeFileSync(missing, '{"body":"a","topic":"x"}\n{"body":"b"}\n');
    const c1 = capture();
    expect(await rehearseCommand(['--input', missing, '--text-field', 'body', '--label-field', 'topic'], c1.io)).toBe(
      1,
    );
    expect(c1.err()).toMatch(/line 2: label field "topic" is missing/);
    const one = join(dir, 'one.jsonl');
    writeFileSync(one, '{"body":"a","topic":"x"}\n{"body":"b","topic":"x"}\n');
    const c2 = capture();
    expect(await rehearseCommand(['--input', one, '--text-field', 'body', '--label-field', 'topic'], c2.io)).toBe(1);
    expect(c2.err()).toMatch(/only one class \("x"\)/);
  });

  it('names the flag in errors about bad values', async () => {
    const cases: [string[], RegExp][] = [
      [['--target', '1.5'], /--target must be a number strictly between 0 and 1, got "1.5"/],
      [['--calibration', 'both'], /--calibration must be one of marginal, per-category/],
      [['--strategy', 'greedy'], /--strategy must be one of/],
      [['--batch', '0'], /--batch must be an integer ≥ 1/],
      [['--random-share', 'abc'], /--random-share must be a number from 0 to 1/],
      [['--budget', '5'], /--budget \(5\) must be at least --start \(10\)/],
      [['--colour', 'red'], /unknown flag --colour/],
    ];
    const minimal = ['--input', file, '--start', '10'];
    for (const [extra, message] of cases) {
      const c = capture();
      expect(await rehearseCommand([...minimal, ...extra], c.io)).toBe(2);
      expect(c.err()).toMatch(message);
    }
    const twice = capture();
    expect(await rehearseCommand([...base, '--seed', '4'], twice.io)).toBe(2);
    expect(twice.err()).toMatch(/--seed given twice/);
    const c = capture();
    expect(await rehearseCommand(['--json'], c.io)).toBe(2);
    expect(c.err()).toMatch(/--input FILE.jsonl is required/);
    const n = capture();
    expect(await rehearseCommand(['--input', join(dir, 'nope.jsonl')], n.io)).toBe(1);
    expect(n.err()).toMatch(/cannot read/);
  });
});
