import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

const NDJSON = [
  '{"text":"the hedge on the north path needs cutting","external_id":"up-1"}',
  '{"text":"quiz night moved to friday"}',
].join('\n');
/** A CSV whose quote never closes: the import fails and imports nothing. */
const BROKEN_CSV = 'text,external_id\n"the fence by the pond,up-9\n';

/** Imports a body into a new desk; answers the import's final state and where its upload was kept. */
async function importOnce(s: Stack, sup: string, name: string, body: string, type: string) {
  const d = await s.call(sup, 'POST', '/api/desks', { name, categories: ['threat', 'harassment', 'ok'] });
  const r = await s.call(sup, 'POST', `/api/desks/${d.body.id}/imports`, body, { 'content-type': type });
  expect(r.status).toBe(202);
  const importId = r.body.importId as string;
  const state = await eventually(
    async () => {
      const st = (await s.call(sup, 'GET', `/api/imports/${importId}`)).body.state as string;
      return st === 'done' || st === 'failed' ? st : undefined;
    },
    60_000,
    'the import',
  );
  return { state, file: join(s.config.dataDir, 'uploads', `${importId}.upload`) };
}

describe.each(DATABASE_KINDS)('uploaded files on %s', (kind) => {
  const stacks: Stack[] = [];
  afterAll(async () => Promise.all(stacks.map((s) => s.stop())));

  it('are deleted once their import has finished, done or failed (KEEP_UPLOADS off by default)', async () => {
    const s = await startStack(kind);
    stacks.push(s);
    expect(s.config.keepUploads).toBe(false);
    const sup = await s.user('up-sup', 'supervisor');
    const done = await importOnce(s, sup, 'uploads a', NDJSON, 'application/x-ndjson');
    expect(done.state).toBe('done');
    await s.waitForQueuesIdle(30_000);
    expect(existsSync(done.file)).toBe(false);
    const failed = await importOnce(s, sup, 'uploads b', BROKEN_CSV, 'text/csv');
    expect(failed.state).toBe('failed');
    expect(existsSync(failed.file)).toBe(false);
  });

  it('are kept with KEEP_UPLOADS=on', async () => {
    const s = await startStack(kind, { env: { KEEP_UPLOADS: 'on' } });
    stacks.push(s);
    const sup = await s.user('up-sup', 'supervisor');
    const done = await importOnce(s, sup, 'uploads c', NDJSON, 'application/x-ndjson');
    expect(done.state).toBe('done');
    expect(readFileSync(done.file, 'utf8')).toBe(NDJSON);
  });
});
