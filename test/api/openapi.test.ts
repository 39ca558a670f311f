import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { NestFactory } from '@nestjs/core';
import type { OpenAPIObject } from '@nestjs/swagger';
import ts from 'typescript';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildOpenApiDocument, schemaNamed } from '#api-docs';
import { parseConfig } from '#config';
import { ApiModule } from '../../apps/api/src/app.module.js';
import { API_VERSION } from '../../apps/api/src/http-app.js';
import { DATABASE_KINDS } from '../support/databases.js';
import { eventually, startStack, type Reply, type Stack } from '../support/stack.js';
import { syntheticPool } from '../support/synthetic.js';

const root = fileURLToPath(new URL('../..', import.meta.url));

/** Routes anyone may call: they declare no security. Adding one here is a decision, not a formality. */
const PUBLIC_OPERATIONS = new Set(['HealthController_health', 'HealthController_ready', 'AuthController_login']);

type Operation = {
  operationId: string;
  parameters?: Array<{ in: string; name: string; required?: boolean; schema?: Record<string, unknown> }>;
  responses: Partial<
    Record<string, { description?: string; content?: Record<string, { schema?: { $ref?: string } }> }>
  >;
  security?: Array<Record<string, unknown>>;
};

function operations(doc: OpenAPIObject): Array<{ method: string; path: string; op: Operation }> {
  return Object.entries(doc.paths).flatMap(([path, item]) =>
    Object.entries(item as Record<string, Operation>).map(([method, op]) => ({ method, path, op })),
  );
}

function controllerFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const full = join(dir, e.name);
    if (e.isDirectory()) return e.name === 'node_modules' ? [] : controllerFiles(full);
    return e.name.endsWith('.controller.ts') ? [full] : [];
  });
}

/**
 * What each handler reads from the query string, from the controllers' source: `@Query('name')` parameters and
 * whether the handler treats each as optional (`?`, a default, or a type that admits `undefined`). Keyed like Nest's
 * operation ids, `Controller_method`.
 */
function handlerQueries(): Map<string, Array<{ name: string; optional: boolean }>> {
  const out = new Map<string, Array<{ name: string; optional: boolean }>>();
  const files = [...controllerFiles(join(root, 'apps')), ...controllerFiles(join(root, 'libs'))];
  for (const file of files) {
    const source = ts.createSourceFile(file, readFileSync(file, 'utf8'), ts.ScriptTarget.ES2022, true);
    const visit = (node: ts.Node): void => {
      if (ts.isMethodDeclaration(node) && ts.isClassDeclaration(node.parent) && node.parent.name) {
        const routed = (ts.getDecorators(node) ?? []).some((d) =>
          /^(Get|Post|Put|Patch|Delete)$/.test(d.expression.getText().split('(')[0]),
        );
        if (routed) {
          const queries: Array<{ name: string; optional: boolean }> = [];
          for (const p of node.parameters) {
            for (const d of ts.getDecorators(p) ?? []) {
              if (!ts.isCallExpression(d.expression) || d.expression.expression.getText() !== 'Query') continue;
              const arg = d.expression.arguments.at(0);
              if (!arg || !ts.isStringLiteral(arg))
                throw new Error(
                  `${file}: ${node.name.getText()} reads the query with @Query() and no name: read each parameter by name so the document can list it`,
                );
              const type = p.type;
              const admitsUndefined =
                type !== undefined &&
                ts.isUnionTypeNode(type) &&
                type.types.some((t) => t.kind === ts.SyntaxKind.UndefinedKeyword);
              queries.push({
                name: arg.text,
                optional: p.questionToken !== undefined || p.initializer !== undefined || admitsUndefined,
              });
            }
          }
          out.set(`${node.parent.name.text}_${node.name.getText()}`, queries);
        }
      }
      ts.forEachChild(node, visit);
    };
    visit(source);
  }
  return out;
}

async function previewDocument(): Promise<OpenAPIObject> {
  const app = await NestFactory.create(ApiModule.forRoot(parseConfig({})), { preview: true, logger: false });
  try {
    return buildOpenApiDocument(app, API_VERSION);
  } finally {
    await app.close();
  }
}

describe('the API document', () => {
  let doc: OpenAPIObject;
  beforeAll(async () => {
    doc = await previewDocument();
  });

  it('gives every operation a 2xx answer with a schema (or 204, no body)', () => {
    const problems: string[] = [];
    for (const { method, path, op } of operations(doc)) {
      const ok = Object.entries(op.responses).filter(([status]) => /^2\d\d$/.test(status)) as Array<
        [string, NonNullable<Operation['responses'][string]>]
      >;
      if (ok.length === 0) problems.push(`${method} ${path}: no 2xx answer`);
      for (const [status, r] of ok) {
        if (status === '204') continue;
        const schemas = Object.values(r.content ?? {}).map((c) => c.schema);
        if (schemas.length === 0 || schemas.some((s) => !s))
          problems.push(`${method} ${path}: ${status} has no schema`);
        for (const s of schemas)
          if (s?.$ref) {
            const id = s.$ref.replace('#/components/schemas/', '');
            if (!doc.components?.schemas?.[id]) problems.push(`${method} ${path}: ${s.$ref} is not in the document`);
          }
      }
    }
    expect(problems).toEqual([]);
    expect(operations(doc).length).toBeGreaterThanOrEqual(43);
  });

  it('lists each query parameter a handler reads, optional exactly when the handler treats it as optional, typed', () => {
    const handlers = handlerQueries();
    const problems: string[] = [];
    for (const { method, path, op } of operations(doc)) {
      const read = handlers.get(op.operationId);
      if (!read) {
        problems.push(`${method} ${path}: no handler ${op.operationId} found in the controllers' source`);
        continue;
      }
      const declared = (op.parameters ?? []).filter((p) => p.in === 'query');
      for (const q of read) {
        const d = declared.find((p) => p.name === q.name);
        if (!d) problems.push(`${op.operationId}: reads ?${q.name} but the document does not list it`);
        else {
          if (Boolean(d.required) === q.optional)
            problems.push(
              `${op.operationId}: ?${q.name} is ${d.required ? 'required' : 'optional'} in the document, ${q.optional ? 'optional' : 'required'} in the handler`,
            );
          if (!d.schema || (!('type' in d.schema) && !('enum' in d.schema)))
            problems.push(`${op.operationId}: ?${q.name} has no type`);
        }
      }
      for (const d of declared)
        if (!read.some((q) => q.name === d.name))
          problems.push(`${op.operationId}: the document lists ?${d.name}, which the handler never reads`);
    }
    expect(problems).toEqual([]);
  });

  it('declares the security of every signed-in route and its 401 and 403, and none on the public ones', () => {
    const problems: string[] = [];
    for (const { method, path, op } of operations(doc)) {
      const schemes = (op.security ?? []).flatMap((s) => Object.keys(s)).sort();
      if (PUBLIC_OPERATIONS.has(op.operationId)) {
        if (schemes.length) problems.push(`${method} ${path}: public but declares ${schemes.join(', ')}`);
        continue;
      }
      if (schemes.join() !== 'bearer,cookie')
        problems.push(`${method} ${path}: security ${schemes.join(', ') || 'none'}`);
      for (const status of ['401', '403'])
        if (!op.responses[status]) problems.push(`${method} ${path}: no ${status} answer`);
    }
    for (const name of ['bearer', 'cookie'])
      expect(doc.components?.securitySchemes?.[name], `security scheme ${name}`).toBeDefined();
    expect(problems).toEqual([]);
  });

  it('documents error answers with a description and the error body', () => {
    const problems: string[] = [];
    for (const { method, path, op } of operations(doc)) {
      const hasId = (op.parameters ?? []).some((p) => p.in === 'path');
      if (hasId && !op.responses['404']) problems.push(`${method} ${path}: takes an id but documents no 404`);
      for (const [status, r] of Object.entries(op.responses)) {
        if (!r || !/^[45]\d\d$/.test(status)) continue;
        if (!r.description) problems.push(`${method} ${path}: ${status} has no description`);
        if (r.content?.['application/json']?.schema?.$ref !== '#/components/schemas/ErrorBody')
          problems.push(`${method} ${path}: ${status} does not use ErrorBody`);
      }
    }
    expect(problems).toEqual([]);
  });
});

/**
 * Real answers against the document: each JSON answer of a running API is parsed with the schema its operation
 * names for that status. The schemas' objects are strict, so a field the document forgets fails here as surely as
 * a field it promises and the server does not send.
 */
describe.each(DATABASE_KINDS)('answers on %s match the document', (kind) => {
  let s: Stack;
  let doc: OpenAPIObject;
  const tokens: Record<string, string> = {};
  const checked = new Set<string>();

  function template(method: string, url: string): { path: string; op: Operation } {
    const pathname = url.split('?')[0];
    for (const { method: m, path, op } of operations(doc)) {
      if (m !== method.toLowerCase()) continue;
      const pattern = new RegExp(`^${path.replace(/[.]/g, '\\.').replace(/\{[^}]+\}/g, '[^/]+')}$`);
      if (pattern.test(pathname)) return { path, op };
    }
    throw new Error(`no operation for ${method} ${pathname}`);
  }

  /** Calls the API and parses a JSON answer with the schema documented for its status. */
  async function call(
    who: string | null,
    method: string,
    url: string,
    body?: unknown,
    headers?: Record<string, string>,
  ) {
    const reply: Reply = await s.call(who ? tokens[who] : null, method, url, body, headers);
    const { path, op } = template(method, url);
    const documented = op.responses[String(reply.status)];
    expect(documented, `${method} ${url} answered ${reply.status}, which the document does not list`).toBeDefined();
    const ref = documented?.content?.['application/json']?.schema?.$ref;
    if (ref && reply.status !== 204) {
      const schema = schemaNamed(ref.replace('#/components/schemas/', ''))!;
      const parsed = schema.safeParse(reply.body);
      expect(parsed.success, `${method} ${url} (${reply.status}): ${parsed.error?.message ?? ''}`).toBe(true);
      if (reply.status < 300) checked.add(`${method.toUpperCase()} ${path}`);
    }
    return reply;
  }

  beforeAll(async () => {
    doc = await previewDocument();
    s = await startStack(kind, { env: { TERMS_AFTER_SECONDS: '0' } });
    for (const [name, role] of [
      ['sup', 'supervisor'],
      ['rev', 'reviewer'],
      ['rev2', 'reviewer'],
      ['aud', 'auditor'],
      ['adm', 'admin'],
    ] as const)
      tokens[name] = await s.user(name, role, 'a-long-password');
  }, 120_000);
  afterAll(async () => (s as Stack | undefined)?.stop());

  it('from the first desk to a published version and its report', async () => {
    await call(null, 'GET', '/healthz');
    await call(null, 'GET', '/readyz');
    await call(null, 'POST', '/api/auth/login', { name: 'sup', password: 'a-long-password' });
    await call('sup', 'GET', '/api/auth/me');
    await call('sup', 'GET', '/api/me/preferences');
    await call('sup', 'PUT', '/api/me/preferences', { blurText: true, breakReminderMinutes: 50 });
    const token = await call('sup', 'POST', '/api/auth/tokens', { name: 'scripts' });
    await call('sup', 'GET', '/api/auth/tokens');
    await call('sup', 'DELETE', `/api/auth/tokens/${token.body.id}`);
    const made = await call('adm', 'POST', '/api/users', { name: 'ash', role: 'reviewer' });
    await call('adm', 'PATCH', `/api/users/${made.body.id}`, { disabled: true });
    await call('adm', 'GET', '/api/users');

    const desk = await call('sup', 'POST', '/api/desks', {
      name: 'document check',
      categories: ['threat', 'harassment', 'ok'],
      seedTerms: { threat: ['hurt', 'find you'], harassment: ['idiot'] },
      retrainEvery: 10,
      retrainAfterSeconds: 1,
      randomShare: 0.3,
      watch: ['threat'],
    });
    expect(desk.status).toBe(201);
    const deskId = desk.body.id as number;
    // The creator supervises the desk; the others join through the members routes.
    const ids = Object.fromEntries(
      ((await s.call(tokens.adm, 'GET', '/api/users')).body.users as Array<{ id: number; name: string }>).map((u) => [
        u.name,
        u.id,
      ]),
    );
    for (const [who, role] of [
      ['rev', 'reviewer'],
      ['rev2', 'reviewer'],
      ['aud', 'auditor'],
    ] as const)
      await call('sup', 'PUT', `/api/desks/${deskId}/members/${ids[who]}`, { role });
    await call('adm', 'PUT', `/api/desks/${deskId}/members/${ids.ash}`, { role: 'reviewer' });
    await call('adm', 'DELETE', `/api/desks/${deskId}/members/${ids.ash}`);
    await call('aud', 'GET', `/api/desks/${deskId}/members`);
    await call('sup', 'GET', '/api/desks');
    await call('rev', 'GET', `/api/desks/${deskId}`);
    await call('sup', 'GET', `/api/desks/${deskId}/coverage-preview`);
    await call('sup', 'GET', `/api/desks/${deskId}/items`);
    await call('sup', 'GET', `/api/desks/${deskId}/screening`);

    const pool = syntheticPool(400, 11);
    const labels = new Map(pool.map((p) => [p.externalId, p.label]));
    const upload = await call(
      'sup',
      'POST',
      `/api/desks/${deskId}/imports`,
      pool.map((p) => JSON.stringify({ text: p.text, external_id: p.externalId })).join('\n'),
      { 'content-type': 'application/x-ndjson' },
    );
    await eventually(
      async () => (await call('sup', 'GET', `/api/imports/${upload.body.importId}`)).body.state === 'done' || undefined,
      120_000,
      'the import',
    );
    await call('aud', 'GET', `/api/desks/${deskId}/imports`);

    // Reviewers decide until a first version is published.
    let lastVerdict = 0;
    await eventually(
      async () => {
        for (const who of ['rev', 'rev2']) {
          const l = await call(who, 'POST', `/api/desks/${deskId}/leases`);
          if (l.status !== 201) continue;
          const v = await call(who, 'POST', `/api/desks/${deskId}/verdicts`, {
            leaseId: l.body.lease.id,
            itemId: l.body.item.id,
            category: labels.get(l.body.item.externalId),
            clientId: `${who}-${l.body.lease.id}`,
            elapsedMs: 1500,
          });
          lastVerdict = v.body.verdict.id;
        }
        return (await s.call(tokens.sup, 'GET', `/api/desks/${deskId}`)).body.currentModelVersion ?? undefined;
      },
      180_000,
      'a first published model version',
    );
    await call('rev', 'GET', `/api/desks/${deskId}/leases/mine`);
    const held = await call('rev', 'POST', `/api/desks/${deskId}/leases`);
    if (held.status === 201) await call('rev', 'DELETE', `/api/leases/${held.body.lease.id}`);
    const mine = await call('rev2', 'GET', `/api/desks/${deskId}/verdicts/mine?limit=5`);
    // Undone with reopen: the answer carries the same item leased again (its schema is checked like any other).
    await call('rev2', 'POST', `/api/verdicts/${mine.body.verdicts[0].id}/undo?reopen=true`);
    await call('rev2', 'GET', `/api/desks/${deskId}/verdicts/mine/count?since=2026-01-01T00:00:00Z`);
    expect(lastVerdict).toBeGreaterThan(0);

    await call('rev', 'GET', `/api/desks/${deskId}/progress`);
    await call('sup', 'GET', `/api/desks/${deskId}/progress`);
    await call('aud', 'GET', `/api/desks/${deskId}/verdicts?limit=20&category=ok`);
    await call('sup', 'GET', `/api/desks/${deskId}/models`);
    await call('sup', 'GET', `/api/desks/${deskId}/term-suggestions?category=threat&limit=5`);
    await call('aud', 'GET', `/api/desks/${deskId}/keyword-counts?period=week`);
    await call('sup', 'POST', `/api/desks/${deskId}/term-suggestions/dismiss`, { category: 'threat', term: 'tonight' });
    await call('sup', 'POST', `/api/desks/${deskId}/term-suggestions/accept`, { category: 'threat', term: 'burn' });
    await call('aud', 'GET', `/api/desks/${deskId}/models/1`);
    await call('aud', 'GET', `/api/desks/${deskId}/coverage`);
    await call('aud', 'GET', `/api/desks/${deskId}/coverage-preview`);
    await call('aud', 'GET', `/api/desks/${deskId}/items?limit=5&call=ambiguous`);
    await call('aud', 'GET', `/api/desks/${deskId}/items?limit=5&lane=cleared`);
    await call('aud', 'GET', `/api/desks/${deskId}/screening`);
    await call('sup', 'PATCH', `/api/desks/${deskId}`, { coverageTarget: 0.85 });
    await call('aud', 'GET', `/api/desks/${deskId}/agreement`);
    const urgent = await call('rev', 'POST', `/api/desks/${deskId}/leases`);
    expect(urgent.status).toBe(201);
    await call('rev', 'POST', `/api/desks/${deskId}/verdicts`, {
      leaseId: urgent.body.lease.id,
      itemId: urgent.body.item.id,
      category: 'threat',
      clientId: 'urgent-in-the-document',
      urgent: true,
      urgentReason: 'names a place and a time',
    });
    await call('aud', 'GET', `/api/desks/${deskId}/urgent`);
    await call('aud', 'GET', `/api/desks/${deskId}/prevalence?period=week&by=imported`);
    await call('sup', 'POST', `/api/items/${urgent.body.item.id}/acknowledge`);
    const live = (await s.call(tokens.aud, 'GET', `/api/desks/${deskId}/verdicts?limit=20`)).body.verdicts.find(
      (v: { undoneAt: string | null }) => v.undoneAt === null,
    );
    const item = live.itemId as number;
    await call('sup', 'POST', `/api/items/${item}/settle`, { category: 'ok', reason: 'checked by hand' });
    await call('aud', 'GET', `/api/items/${item}`);
    await call('aud', 'POST', `/api/items/${item}/read`);
    await call('aud', 'GET', `/api/desks/${deskId}/verdicts?limit=5&reviewerMatch=REV`);
    await call('aud', 'GET', `/api/desks/${deskId}/disagreements?limit=10`);
    await call('sup', 'GET', `/api/desks/${deskId}/simulation`);
    await call('aud', 'GET', `/api/audit?limit=50`);
    const ready = await eventually(
      async () =>
        (await call('aud', 'GET', `/api/desks/${deskId}/reports`)).body.reports.find(
          (r: { status: string }) => r.status === 'ready',
        ) as { version: number } | undefined,
      120_000,
      'a written report',
    );
    await call('aud', 'GET', `/api/desks/${deskId}/models/${ready.version}/report.json`);
    await call('aud', 'GET', `/api/desks/${deskId}/models/${ready.version}/model.json`);
    const started = await call('sup', 'POST', '/api/desks', {
      name: 'started from another desk',
      categories: ['ok', 'threat', 'doxxing'],
      startFrom: { deskId, version: ready.version },
    });
    expect(started.status).toBe(201);
    await call('sup', 'POST', `/api/desks/${deskId}/erasures`, { itemIds: [item], reason: 'a request to erase' });
    await call('aud', 'GET', `/api/desks/${deskId}/erasures`);
    // The erased item's page: the tombstone's record and an empty read.
    await call('aud', 'GET', `/api/items/${item}`);
    await call('aud', 'POST', `/api/items/${item}/read`);
    await call('sup', 'POST', `/api/desks/${deskId}/erasures`, { reason: 'no selector' });
    await call('sup', 'PATCH', `/api/desks/${deskId}`, {
      retention: { decidedAfterDays: 3650, categories: { ok: 365 } },
    });
    await call('sup', 'POST', `/api/desks/${deskId}/retention/run?dryRun=1`);
    const [scored] = await s.db.query<{ external_id: string }>(
      null,
      `SELECT i.external_id FROM items i JOIN predictions p ON p.item_id = i.id
       WHERE i.desk_id = $1 AND i.erased_at IS NULL ORDER BY i.id LIMIT 1`,
      [deskId],
    );
    const subject = await call('aud', 'GET', `/api/desks/${deskId}/subject?externalId=${scored.external_id}`);
    expect(Object.keys(subject.body.items[0].predictions[0].probabilities).sort()).toEqual([
      'harassment',
      'ok',
      'threat',
    ]);
    await call('sup', 'GET', `/api/desks/${deskId}/subject?source=board&download=1`);
    await call('sup', 'GET', `/api/desks/${deskId}/subject`);
    // Errors carry the documented body too.
    await call('rev', 'GET', `/api/desks/${deskId}/models`);
    await call('aud', 'GET', '/api/desks/999999');
    await call('aud', 'GET', `/api/desks/${deskId}/items?limit=0`);

    // Every JSON operation's answer was checked, except those the flow cannot reach without a demo desk.
    const json = operations(doc)
      .filter(({ op }) =>
        Object.entries(op.responses).some(([st, r]) => /^2/.test(st) && r?.content?.['application/json']),
      )
      .map(({ method, path }) => `${method.toUpperCase()} ${path}`);
    const unreached = json.filter((k) => !checked.has(k)).sort();
    expect(unreached).toEqual(['POST /api/desks/{deskId}/simulation']);
  }, 600_000);
});
