import { defineCommand, runEntry, UsageError, type CliIo } from './cli-command.js';
import type { LabelledFile } from './rehearse/read-labelled-file.js';
import { REHEARSE_OPTIONS, rehearseFlags } from './rehearse/rehearse-flags.js';

/** Rejected rows listed on stderr before the rest are only counted. */
const REJECTED_SHOWN = 20;

function reportInput(input: LabelledFile, io: CliIo): void {
  for (const r of input.rejected.slice(0, REJECTED_SHOWN)) io.stderr.write(`rehearse: row ${r.row}: ${r.reason}\n`);
  if (input.rejected.length > REJECTED_SHOWN)
    io.stderr.write(`rehearse: … and ${input.rejected.length - REJECTED_SHOWN} more rejected rows\n`);
  if (input.rejected.length > 0 || input.duplicates > 0)
    io.stderr.write(
      `rehearse: ${input.items.length} of ${input.rows} rows used (${input.rejected.length} rejected, ${input.duplicates} duplicates)\n`,
    );
}

/**
 * `cribra rehearse`: replays a labelled file as if reviewers worked a desk, and reports the learning curve, the
 * coverage achieved on a held-out test set, and how many verdicts the model needed. Exit codes: 0 done, 1 unusable
 * input, 2 bad options.
 */
export const rehearse = defineCommand({
  name: 'rehearse',
  summary: 'replay a labelled archive offline: how many verdicts a desk needs, what sets to expect',
  description:
    'Runs the learning loop offline on texts that are already labelled, as if reviewers worked a desk: a cold ' +
    "start, then leases served by the service's sampling policy under the strategy, with a random share that " +
    'calibrates and a retrain every batch. Prints the learning curve, ' +
    'the coverage of the prediction sets on the items still open at each point (what a desk shows sets on) and on ' +
    'held-out rows, how many verdicts the model needed, and the answer in one sentence. With --seeds it runs once ' +
    'per seed and prints medians and ranges. The file is read like an import (same formats, row rules and ' +
    'messages); rejected rows are listed on stderr and left out, and a warning says when the input or the budget ' +
    'is too small for the requested target. With --watch it also measures screening as a desk watching those ' +
    'categories would: at each point and at the end, per watched category, the share of its items decided or ' +
    'flagged (the promise a desk states), the recall and reading load on the open items and how many of its items the cleared pile really holds against the estimate and 95% interval a ' +
    'desk would state; with --seed-terms, the keyword baseline beside it.',
  options: REHEARSE_OPTIONS,
  async run({ values }, io) {
    const flags = rehearseFlags(values);
    // Loaded here so that `--help` does not load the learning core and the import parser.
    const { prepareRehearsal, runRehearsal } = await import('#learning');
    const { formatRehearsal, formatScreening, formatSeeds, formatTransfer, progressBar } =
      await import('./rehearse/format-rehearsal.js');
    const { checkUsable, InputError, readLabelledFile } = await import('./rehearse/read-labelled-file.js');
    try {
      const startFrom = flags.startFrom === undefined ? undefined : await readModelFile(flags.startFrom);
      const input = await readLabelledFile(flags.input, flags.labelField, flags.format);
      reportInput(input, io);
      checkUsable(input, flags.input, flags.labelField);
      const classes = [...new Set(input.items.map((item) => item.label))].sort();
      const unknown = flags.watch.filter((c) => !classes.includes(c));
      if (unknown.length > 0)
        throw new UsageError(
          `--watch: ${unknown.join(', ')} ${unknown.length > 1 ? 'are not categories' : 'is not a category'} of ${flags.input} (its categories: ${classes.join(', ')})`,
        );
      const seedTerms = flags.seedTerms === undefined ? undefined : await readSeedTerms(flags.seedTerms, classes);
      const { createFeaturizer, summarizeSeeds, tuneRehearsalC } = await import('#learning');
      // Hashed counts do not depend on the seed: computed once for every run (with the model's featuriser, if any).
      const featurizer = createFeaturizer(startFrom?.featurizer);
      const counts = input.items.map((item) => featurizer.counts(item.text));
      const results = [];
      const tuning = [];
      const runs = flags.seeds.length;
      for (const [r, seed] of flags.seeds.entries()) {
        const data = prepareRehearsal(input.items, {
          testShare: flags.testShare,
          seed,
          counts,
          ...(startFrom ? { featurizer: startFrom.featurizer } : {}),
        });
        const tuned = flags.tune ? tuneRehearsalC(data, { budget: flags.budget, seed, folds: flags.folds }) : null;
        if (tuned !== null) tuning.push({ seed, ...tuned });
        const result = runRehearsal(data, {
          target: flags.target,
          calibration: flags.calibration,
          score: flags.score,
          strategy: flags.strategy,
          randomShare: flags.randomShare,
          start: flags.start,
          batch: flags.batch,
          budget: flags.budget,
          testShare: flags.testShare,
          seed,
          compareRandom: flags.compareRandom,
          ...(flags.watch.length > 0 ? { watch: flags.watch, screenShare: flags.screenShare } : {}),
          ...(seedTerms ? { seedTerms } : {}),
          ...(startFrom ? { startFrom } : {}),
          ...(tuned === null ? {} : { training: { c: tuned.c } }),
          onProgress: flags.json
            ? undefined
            : (done, total) => io.stderr.write(progressBar(r * total + done, runs * total)),
        });
        results.push(result);
      }
      if (!flags.json) io.stderr.write('\n');
      for (const warning of results[0].warnings) io.stderr.write(`rehearse: warning: ${warning}\n`);
      const summary = summarizeSeeds(results);
      const inputSummary = {
        format: input.format,
        rows: input.rows,
        used: input.items.length,
        rejected: input.rejected.length,
        duplicates: input.duplicates,
      };
      if (flags.json) {
        const tuningField = flags.tune ? { tuning: flags.multiSeed ? tuning : tuning[0] } : {};
        io.stdout.write(
          JSON.stringify(
            flags.multiSeed
              ? { runs: results, summary, ...tuningField, input: inputSummary }
              : { ...results[0], sentence: summary.sentence, ...tuningField, input: inputSummary },
          ) + '\n',
        );
      } else {
        io.stdout.write(
          (flags.multiSeed ? formatSeeds(results, summary, tuning) : formatRehearsal(results[0], summary, tuning[0])) +
            formatScreening(results) +
            formatTransfer(results),
        );
      }
      return 0;
    } catch (error) {
      if (error instanceof InputError || error instanceof RangeError) {
        io.stderr.write(`rehearse: ${error.message}\n`);
        return 1;
      }
      throw error;
    }
  },
});

/** Reads and checks a model file for `--start-from`; an unreadable or foreign file is an input error (exit 1). */
async function readModelFile(path: string) {
  const { readFile } = await import('node:fs/promises');
  const { readModelExport } = await import('#learning');
  const { InputError } = await import('./rehearse/read-labelled-file.js');
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(`--start-from ${path}: cannot read it (${(e as Error).message})`);
  }
  try {
    return readModelExport(JSON.parse(text));
  } catch (e) {
    throw new InputError(`--start-from ${path}: ${(e as Error).message}`);
  }
}

/**
 * Reads `--seed-terms`: a JSON object {category: [terms]}, checked by the desk settings' rule (`checkSeedTerms`)
 * against the file's categories. An unreadable file, malformed JSON or a term the desk would refuse is an input
 * error (exit 1), naming the file and every problem.
 */
async function readSeedTerms(path: string, categories: string[]): Promise<Record<string, string[]>> {
  const { readFile } = await import('node:fs/promises');
  const { checkSeedTerms } = await import('#learning');
  const { InputError } = await import('./rehearse/read-labelled-file.js');
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (e) {
    throw new InputError(`--seed-terms ${path}: cannot read it (${(e as Error).message})`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new InputError(`--seed-terms ${path}: not JSON (${(e as Error).message})`);
  }
  if (json === null || typeof json !== 'object' || Array.isArray(json))
    throw new InputError(`--seed-terms ${path}: expected a JSON object {"category": ["term", …]}`);
  const { seedTerms, problems } = checkSeedTerms(json, categories);
  if (problems.length > 0)
    throw new InputError(
      `--seed-terms ${path}: ${problems.join('; ')} (the file's categories: ${categories.join(', ')})`,
    );
  if (Object.keys(seedTerms).length === 0) throw new InputError(`--seed-terms ${path}: holds no term`);
  return seedTerms;
}

/** Runs `rehearse` with its arguments (the command line and the tests). */
export function rehearseCommand(argv: string[], io: CliIo = process): Promise<number> {
  return runEntry(rehearse, argv, io);
}
