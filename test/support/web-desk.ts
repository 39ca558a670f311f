import { expect } from 'vitest';
import { eventually, type Stack } from './stack.js';
import { syntheticPool } from './synthetic.js';

export const PASSWORD = 'correct horse battery';

export interface WebDesk {
  deskId: number;
  sup: string;
  rev: string;
  labels: Map<string, string>;
}

/**
 * A desk for the browser tests: accounts with passwords (one per role), the
 * synthetic pool imported, and, when asked, reviewers' verdicts given through
 * the API from the hidden labels until a model version is current. Extra texts
 * are imported after those verdicts and stay open.
 */
export async function webDesk(
  s: Stack,
  options: { pool?: number; verdicts?: number; extraTexts?: string[] } = {},
): Promise<WebDesk> {
  const sup = await s.user('sasha', 'supervisor', PASSWORD);
  const rev = await s.user('robin', 'reviewer', PASSWORD);
  await s.user('ada', 'auditor', PASSWORD);
  const d = await s.call(sup, 'POST', '/api/desks', {
    name: 'Mossbank Commons',
    categories: ['threat', 'harassment', 'ok'],
    seedTerms: { threat: ['hurt', 'find you'], harassment: ['idiot', 'clown'], ok: ['thanks'] },
    randomShare: 0.3,
    retrainEvery: 20,
    retrainAfterSeconds: 2,
  });
  expect(d.status).toBe(201);
  const deskId = d.body.id as number;
  await s.enrol(deskId);
  const pool = syntheticPool(options.pool ?? 400);
  const labels = new Map<string, string>(pool.map((p) => [p.externalId, p.label]));
  const rows = pool.map((p) => ({ text: p.text, externalId: p.externalId, source: 'board/general' }));
  const importRows = async (list: typeof rows) => {
    const imp = await s.call(
      sup,
      'POST',
      `/api/desks/${deskId}/imports`,
      list.map((r) => JSON.stringify(r)).join('\n'),
      {
        'content-type': 'application/x-ndjson',
      },
    );
    expect(imp.status).toBe(202);
    await eventually(
      async () =>
        (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
      60_000,
      'import done',
    );
  };
  await importRows(rows);
  for (let i = 0; i < (options.verdicts ?? 0); i++) {
    // The pool is far from used up: an item comes back even while a version is being published.
    const l = await s.call(rev, 'POST', `/api/desks/${deskId}/leases`);
    expect(l.status).toBe(201);
    const v = await s.call(rev, 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: l.body.lease.id,
      itemId: l.body.item.id,
      category: labels.get(l.body.item.externalId),
      clientId: `setup-${i}`,
      elapsedMs: 4000 + i,
    });
    expect(v.status).toBe(201);
  }
  // The extra texts arrive after the setup verdicts, so that none of them is decided and a test can find each one open.
  const extras = (options.extraTexts ?? []).map((text, i) => ({
    text,
    externalId: `extra-${i}`,
    source: 'board/general',
  }));
  for (const e of extras) labels.set(e.externalId, 'ok');
  if (extras.length > 0) await importRows(extras);
  if (options.verdicts) {
    await eventually(
      async () => ((await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion ? true : undefined),
      60_000,
      'a model version',
    );
    // Let the debounced retrains run out, so the version the screens show stays current while a test reads it,
    // and let the desk settings cache (2 s) see it.
    await s.waitForQueuesIdle(60_000);
    await new Promise((r) => setTimeout(r, 2100));
  }
  return { deskId, sup, rev, labels };
}
