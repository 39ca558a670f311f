import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type DbInt } from '#database';
import { generateMossbankPool, mossbankNdjson } from '#demo';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';

interface Suggestion {
  term: string;
  similarity: number | null;
  count: number;
  leaning: number | null;
  towardsCategory: boolean | null;
  snippets: Array<{ itemId: number; text: string; start: number; end: number }>;
}

describe.each(DATABASE_KINDS)('seed-term suggestions on %s', (kind) => {
  let s: Stack;
  let sup = '';
  let deskId = 0;
  const posts = generateMossbankPool({ seed: 5, count: 600 });
  const hidden = new Map(posts.map((p) => [p.externalId, p.category]));

  beforeAll(async () => {
    s = await startStack(kind, { env: { TERMS_AFTER_SECONDS: '0' } });
    sup = await s.user('terms-sup', 'supervisor');
    await s.user('terms-rev', 'reviewer');
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'term suggestions',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hurt you', 'watch your back', 'kill*'], harassment: ['pathetic'] },
      retrainEvery: 10,
      retrainAfterSeconds: 1,
    });
    deskId = d.body.id as number;
    await s.enrol(deskId);
    const imp = await s.call(sup, 'POST', `/api/desks/${deskId}/imports`, mossbankNdjson(posts), {
      'content-type': 'application/x-ndjson',
    });
    expect(imp.status).toBe(202);
    await eventually(
      async () => (await s.call(sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' || undefined,
      120_000,
      'the import',
    );
    await s.waitForQueuesIdle(120_000);
  }, 300_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  const suggest = (query: string) => s.call(sup, 'GET', `/api/desks/${deskId}/term-suggestions?${query}`);

  it('counts the pool after the import and suggests words used like the seed terms, with counts and snippets', async () => {
    const r = await suggest('category=threat&limit=15');
    expect(r.status).toBe(200);
    expect(r.body.itemsCounted).toBe(600);
    expect(r.body.computedAt).not.toBeNull();
    // The multi-word seed terms were counted as terms of their own, and every form of kill* ("kill", "killed",
    // "killer") as the one term kill*.
    expect(r.body.seedTermsNotCounted).toEqual([]);
    expect(r.body.modelVersion).toBeNull();
    expect(r.body.fromModel).toEqual([]);
    const similar = r.body.similar as Suggestion[];
    expect(similar.length).toBe(15);
    const sims = similar.map((x) => x.similarity!);
    expect([...sims].sort((a, b) => b - a)).toEqual(sims);
    for (const x of similar) {
      expect(x.count).toBeGreaterThanOrEqual(3);
      expect(x.leaning).toBeNull();
      expect(x.snippets.length).toBeGreaterThanOrEqual(1);
      expect(x.snippets.length).toBeLessThanOrEqual(3);
      for (const sn of x.snippets) expect(sn.text.slice(sn.start, sn.end).toLowerCase()).toBe(x.term);
      expect(['hurt you', 'watch your back', 'pathetic']).not.toContain(x.term);
      expect(x.term.startsWith('kill'), `${x.term} is a form of the seed term kill*`).toBe(false);
    }
    // The words suggested for "threat" occur more in threat posts than words do on average (hidden category
    // of the generated posts; the import does not carry it).
    const rows = await s.db.query<{ id: DbInt; external_id: string }>(
      null,
      'SELECT id, external_id FROM items WHERE desk_id = $1',
      [deskId],
    );
    const categoryOf = new Map(rows.map((row) => [Number(row.id), hidden.get(row.external_id)]));
    const snippetItems = similar.flatMap((x) => x.snippets.map((sn) => sn.itemId));
    const threatShare = snippetItems.filter((id) => categoryOf.get(id) === 'threat').length / snippetItems.length;
    const baseShare = posts.filter((p) => p.category === 'threat').length / posts.length;
    console.info(
      `${kind}: threat suggestions ${similar.map((x) => x.term).join(', ')}; ` +
        `snippets from threat posts ${threatShare.toFixed(2)} (pool ${baseShare.toFixed(2)})`,
    );
    expect(threatShare).toBeGreaterThan(baseShare);
  });

  it('refuses a bad category or limit with 400', async () => {
    expect((await suggest('category=nope')).status).toBe(400);
    expect((await suggest('limit=5')).status).toBe(400);
    expect((await suggest('category=threat&limit=0')).status).toBe(400);
    expect((await suggest('category=threat&limit=ten')).status).toBe(400);
    const bad = await s.call(sup, 'POST', `/api/desks/${deskId}/term-suggestions/dismiss`, { category: 'threat' });
    expect(bad.status).toBe(400);
  });

  it('dismisses a suggestion for good, and accepts one into the seed terms (both audited)', async () => {
    const before = (await suggest('category=threat&limit=5')).body.similar as Suggestion[];
    const [first, second] = [before[0].term, before[1].term];
    const d1 = await s.call(sup, 'POST', `/api/desks/${deskId}/term-suggestions/dismiss`, {
      category: 'threat',
      term: first,
    });
    expect(d1.status).toBe(200);
    expect(d1.body).toMatchObject({ decision: 'dismissed', changed: true });
    const d2 = await s.call(sup, 'POST', `/api/desks/${deskId}/term-suggestions/dismiss`, {
      category: 'threat',
      term: first,
    });
    expect(d2.body.changed).toBe(false);
    const afterDismiss = (await suggest('category=threat&limit=30')).body.similar as Suggestion[];
    expect(afterDismiss.map((x) => x.term)).not.toContain(first);
    // Dismissed for threat only.
    const forOk = await s.call(sup, 'POST', `/api/desks/${deskId}/term-suggestions/dismiss`, {
      category: 'ok',
      term: second,
    });
    expect(forOk.body.changed).toBe(true);

    const a = await s.call(sup, 'POST', `/api/desks/${deskId}/term-suggestions/accept`, {
      category: 'threat',
      term: second,
    });
    expect(a.status).toBe(200);
    expect(a.body).toMatchObject({ decision: 'accepted', changed: true });
    expect(a.body.seedTerms).toContain(second);
    expect((await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.seedTerms.threat).toContain(second);
    const afterAccept = await suggest('category=threat&limit=30');
    expect(afterAccept.body.seedTerms).toContain(second);
    expect((afterAccept.body.similar as Suggestion[]).map((x) => x.term)).not.toContain(second);

    const audit = await s.db.query<{ action: string; after: string | null }>(
      null,
      `SELECT action, after FROM audit_events WHERE desk_id = $1 AND action IN ('term-suggestion.dismiss', 'desk.update') ORDER BY id`,
      [deskId],
    );
    expect(audit.map((e) => e.action)).toEqual(['term-suggestion.dismiss', 'term-suggestion.dismiss', 'desk.update']);
    expect(JSON.parse(audit[0].after!)).toEqual({ category: 'threat', term: first });
    expect(JSON.parse(audit[2].after!).seedTerms.threat).toContain(second);
  });

  it('suggests from the model once one is published: the words it leans most towards the category', async () => {
    const labels = new Map(posts.map((p) => [p.externalId, p.category]));
    await eventually(
      async () => {
        const l = await s.call(s.tokens['terms-rev'], 'POST', `/api/desks/${deskId}/leases`);
        if (l.status === 201)
          await s.call(s.tokens['terms-rev'], 'POST', `/api/desks/${deskId}/verdicts`, {
            leaseId: l.body.lease.id,
            itemId: l.body.item.id,
            category: labels.get(l.body.item.externalId),
            clientId: `terms-${l.body.lease.id}`,
            elapsedMs: 1000,
          });
        return (await s.call(sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion ?? undefined;
      },
      180_000,
      'a first published model version',
    );
    const r = await suggest('category=threat&limit=10');
    expect(r.body.modelVersion).not.toBeNull();
    const fromModel = r.body.fromModel as Suggestion[];
    expect(fromModel.length).toBeGreaterThan(0);
    const leanings = fromModel.map((x) => x.leaning!);
    expect(leanings.every((l) => l > 0)).toBe(true);
    expect([...leanings].sort((a, b) => b - a)).toEqual(leanings);
    expect(fromModel.every((x) => x.towardsCategory === true && x.similarity === null)).toBe(true);
    // The similar list now says which way the model leans each word.
    expect((r.body.similar as Suggestion[]).every((x) => typeof x.towardsCategory === 'boolean')).toBe(true);
    console.info(`${kind}: from the model v${r.body.modelVersion}: ${fromModel.map((x) => x.term).join(', ')}`);
  });
});
