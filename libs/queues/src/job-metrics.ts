import type { Redis } from 'ioredis';

/** How a job attempt ended, as the job lines and the metrics name it. */
export type JobOutcome = 'completed' | 'retrying' | 'failed';

/** One row of the job figures the workers keep in Redis. */
export interface JobFigure {
  queue: string;
  job: string;
  outcome: JobOutcome;
  count: number;
  seconds: number;
}

/** The hash where every worker process adds its finished attempts, so that the API can report them all. */
const keyOf = (prefix: string) => `${prefix}:metrics:jobs`;

/** Adds one finished job attempt and its duration to the shared figures (one round trip, atomic per field). */
export async function recordJob(
  redis: Redis,
  prefix: string,
  figure: { queue: string; job: string; outcome: JobOutcome; seconds: number },
): Promise<void> {
  const field = `${figure.queue}\t${figure.job}\t${figure.outcome}`;
  await redis
    .multi()
    .hincrby(keyOf(prefix), `${field}\tcount`, 1)
    .hincrbyfloat(keyOf(prefix), `${field}\tseconds`, figure.seconds)
    .exec();
}

/** Every worker's finished attempts so far, per queue, job name and outcome. */
export async function readJobFigures(redis: Redis, prefix: string): Promise<JobFigure[]> {
  const all = await redis.hgetall(keyOf(prefix));
  const rows = new Map<string, JobFigure>();
  for (const [field, value] of Object.entries(all)) {
    const [queue, job, outcome, what] = field.split('\t');
    const id = `${queue}\t${job}\t${outcome}`;
    const row = rows.get(id) ?? { queue, job, outcome: outcome as JobOutcome, count: 0, seconds: 0 };
    if (what === 'count') row.count = Number(value);
    else row.seconds = Number(value);
    rows.set(id, row);
  }
  return [...rows.values()];
}
