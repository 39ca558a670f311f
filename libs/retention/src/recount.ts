import type { AppConfig } from '#config';
import { JOBS, type JobQueueService } from '#queues';

/**
 * Asks for a new word count of a desk whose texts were erased: the erasure dropped its word statistics, and the count
 * reads only texts that remain. Delayed like any count request, so a run of erasures gives one count. Processes
 * without Redis (the `cribra retention` command) leave it to the desk's next import or seed-term change.
 */
export async function askRecount(jobs: JobQueueService, config: AppConfig, deskId: number): Promise<void> {
  await jobs.add(JOBS.countTerms, { deskId }, { delay: config.termsAfterSeconds * 1000 });
}
