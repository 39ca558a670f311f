import { prepareRehearsal, runRehearsal } from '#learning';
import { formatRehearsal, progressBar } from './rehearse/format-rehearsal.js';
import { InputError, readLabelledJsonl } from './rehearse/read-labelled-jsonl.js';
import { parseRehearseFlags, REHEARSE_USAGE, UsageError } from './rehearse/rehearse-flags.js';

export interface RehearseIo {
  stdout: { write(chunk: string): unknown };
  stderr: { write(chunk: string): unknown };
}

/**
 * `cribra rehearse`: replays a labelled JSON-lines file as if reviewers
 * worked a desk, and reports the learning curve, the coverage achieved on a
 * held-out test set, and how many verdicts the model needed. Exit codes:
 * 0 done, 1 unusable input, 2 bad flags.
 */
export async function rehearseCommand(argv: string[], io: RehearseIo = process): Promise<number> {
  let flags;
  try {
    flags = parseRehearseFlags(argv);
  } catch (error) {
    if (error instanceof UsageError) {
      io.stderr.write(`rehearse: ${error.message}\n${REHEARSE_USAGE}\n`);
      return 2;
    }
    throw error;
  }
  try {
    const items = await readLabelledJsonl(flags.input, flags.textField, flags.labelField);
    const data = prepareRehearsal(items, { testShare: flags.testShare, seed: flags.seed });
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
      io.stdout.write(JSON.stringify(result) + '\n');
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
}
