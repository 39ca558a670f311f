import { Database, type DbInt } from '#database';
import { JOBS, JobQueueService } from '#queues';

/** The scoring flow of a version: one child job per chunk of open items, and the publish job as their parent. */
export async function enqueueScoring(
  db: Database,
  jobs: JobQueueService,
  deskId: number,
  version: number,
  chunkSize: number,
): Promise<void> {
  const ids = await db.query<{ id: DbInt }>(
    null,
    `SELECT id FROM items WHERE desk_id = $1 AND state <> 'decided' ORDER BY id`,
    [deskId],
  );
  const chunks: Array<{ fromId: number; toId: number }> = [];
  for (let i = 0; i < ids.length; i += chunkSize) {
    const fromId = Number(ids[i].id);
    const toId = i + chunkSize < ids.length ? Number(ids[i + chunkSize].id) : Number(ids[ids.length - 1].id) + 1;
    chunks.push({ fromId, toId });
  }
  await jobs.flow(
    { name: JOBS.publishVersion, payload: { deskId, version } },
    chunks.map((c) => ({ name: JOBS.scoreChunk, payload: { deskId, version, ...c } })),
  );
}
