import { defineCommand, runEntry, type CliIo } from './cli-command.js';
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
    'start, then batches chosen by the strategy with a random share that calibrates. Prints the learning curve, ' +
    'the coverage reached on held-out rows, and how many verdicts the model needed. The file is read like an ' +
    'import (same formats, row rules and messages); rejected rows are listed on stderr and left out.',
  options: REHEARSE_OPTIONS,
  async run({ values }, io) {
    const flags = rehearseFlags(values);
    // Loaded here so that `--help` does not load the learning core and the import parser.
    const { prepareRehearsal, runRehearsal } = await import('#learning');
    const { formatRehearsal, progressBar } = await import('./rehearse/format-rehearsal.js');
    const { checkUsable, InputError, readLabelledFile } = await import('./rehearse/read-labelled-file.js');
    try {
      const input = await readLabelledFile(flags.input, flags.labelField, flags.format);
      reportInput(input, io);
      checkUsable(input, flags.input, flags.labelField);
      const data = prepareRehearsal(input.items, { testShare: flags.testShare, seed: flags.seed });
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
        seed: flags.seed,
        compareRandom: flags.compareRandom,
        onProgress: flags.json ? undefined : (done, total) => io.stderr.write(progressBar(done, total)),
      });
      if (flags.json) {
        const inputSummary = {
          format: input.format,
          rows: input.rows,
          used: input.items.length,
          rejected: input.rejected.length,
          duplicates: input.duplicates,
        };
        io.stdout.write(JSON.stringify({ ...result, input: inputSummary }) + '\n');
      } else {
        io.stderr.write('\n');
        io.stdout.write(formatRehearsal(result));
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

/** Runs `rehearse` with its arguments (the command line and the tests). */
export function rehearseCommand(argv: string[], io: CliIo = process): Promise<number> {
  return runEntry(rehearse, argv, io);
}
