import { expect } from 'vitest';
import { eventually, type Stack } from './stack.js';

/** Imports rows (NDJSON through the API) into a desk and waits until the import is done. */
export async function importRows(
  s: Stack,
  token: string,
  deskId: number,
  rows: Array<Record<string, unknown>>,
): Promise<void> {
  const body = rows.map((r) => JSON.stringify(r)).join('\n');
  const imp = await s.call(token, 'POST', `/api/desks/${deskId}/imports`, body, {
    'content-type': 'application/x-ndjson',
  });
  expect(imp.status).toBe(202);
  await eventually(
    async () =>
      (await s.call(token, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
    180_000,
    'the import',
  );
}

/** One verdict given by {@link answerFromLabels}: the lease's draw (read from the database) and the label given. */
export interface Answered {
  itemId: number;
  draw: string;
  label: string;
  shown: { set: string[] } | null;
}

/**
 * Reviewers answering leases through the API from the items' known labels
 * (by external id), in parallel, until `enough(answered)` holds or the queue
 * is empty. Returns every verdict given.
 */
export async function answerFromLabels(
  s: Stack,
  deskId: number,
  reviewers: string[],
  labels: Map<string, string>,
  enough: (answered: Answered[]) => boolean,
  answered: Answered[] = [],
): Promise<Answered[]> {
  await Promise.all(
    reviewers.map(async (token, r) => {
      while (!enough(answered)) {
        const l = await s.call(token, 'POST', `/api/desks/${deskId}/leases`);
        if (l.status === 204) return;
        expect(l.status).toBe(201);
        const label = labels.get(l.body.item.externalId);
        if (label === undefined) throw new Error(`no label for ${l.body.item.externalId}`);
        const v = await s.call(token, 'POST', `/api/desks/${deskId}/verdicts`, {
          leaseId: l.body.lease.id,
          itemId: l.body.item.id,
          category: label,
          clientId: `r${r}-${l.body.lease.id}`,
        });
        expect(v.status).toBe(201);
        const [{ draw }] = await s.db.query<{ draw: string }>(null, 'SELECT draw FROM leases WHERE id = $1', [
          l.body.lease.id,
        ]);
        answered.push({ itemId: l.body.item.id, draw, label, shown: l.body.prediction });
      }
    }),
  );
  return answered;
}

/** The categories of the screening and prevalence tests' desks. */
export const SCREENING_CATEGORIES = ['threat', 'harassment', 'ok'];

/**
 * A desk of {@link SCREENING_CATEGORIES} for the screening and prevalence tests, with the caller enrolled: first draws
 * only, three in five leases uniformly random (many verdicts that calibrate and estimate), a retrain every 40 verdicts
 * or 2 s after the first new one. `settings` adds to or overrides these.
 */
export async function screeningDesk(
  s: Stack,
  token: string,
  name: string,
  settings: Record<string, unknown> = {},
): Promise<number> {
  const d = await s.call(token, 'POST', '/api/desks', {
    name,
    categories: SCREENING_CATEGORIES,
    seedTerms: { threat: ['hurt'], harassment: ['idiot'] },
    secondOpinionShare: 0,
    randomShare: 0.6,
    retrainEvery: 40,
    retrainAfterSeconds: 2,
    ...settings,
  });
  expect(d.status).toBe(201);
  await s.enrol(d.body.id);
  return d.body.id as number;
}
