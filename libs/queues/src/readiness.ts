import type { Database } from '#database';
import type { JobQueueService } from './job-queue.service.js';

/** How long each readiness check may take: both run at once, so a probe hears its answer within a second. */
export const READY_TIMEOUT_MS = 400;

/** True when `check` resolves within {@link READY_TIMEOUT_MS}; false when it rejects or is late. */
function answersInTime(check: Promise<unknown>): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const late = new Promise<boolean>((resolve) => {
    timer = setTimeout(() => resolve(false), READY_TIMEOUT_MS);
  });
  return Promise.race([
    check.then(
      () => true,
      () => false,
    ),
    late,
  ]).finally(() => clearTimeout(timer));
}

/**
 * Whether the database and Redis answer, each within {@link READY_TIMEOUT_MS}: the readiness rule of the API's
 * `/readyz` and of a worker's health server. A command that never returns (a paused server, a dropped network)
 * counts as no answer.
 */
export async function checkDependencies(
  db: Database,
  jobs: JobQueueService,
): Promise<{ database: boolean; redis: boolean }> {
  const [database, redis] = await Promise.all([
    answersInTime(db.ping()),
    answersInTime(jobs.ping().then((ok) => (ok ? Promise.resolve() : Promise.reject(new Error('no PONG'))))),
  ]);
  return { database, redis };
}
