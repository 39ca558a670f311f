import type { INestApplication } from '@nestjs/common';
import { DocumentBuilder, SwaggerModule, type OpenAPIObject } from '@nestjs/swagger';
import { ErrorBody, jsonSchemaOf, namedJsonSchemas } from './response-schema.js';

/** The security schemes a signed-in route accepts (either one): `@Roles` declares them on the route. */
export const OPENAPI_SECURITY = { bearer: 'bearer', cookie: 'cookie' } as const;

type Operation = {
  parameters?: Array<{ in: string; name: string }>;
  requestBody?: unknown;
  responses: Record<string, unknown>;
  security?: unknown[];
};

const METHODS = ['get', 'put', 'post', 'delete', 'patch', 'head', 'options'] as const;

/**
 * Error answers every route of a kind can give, added where the route does not describe them itself: 400 for a path
 * id that is not a number, a bad query value or body; 404 for an id that names nothing. (401 and 403 come with
 * `@Roles`.)
 */
function addCommonErrors(op: Operation): void {
  const error = (description: string) => ({
    description,
    content: { 'application/json': { schema: jsonSchemaOf(ErrorBody) } },
  });
  const params = op.parameters ?? [];
  if ((params.length > 0 || op.requestBody !== undefined) && !op.responses['400'])
    op.responses['400'] = error('a path id, query value or body is not valid; the message says which and why');
  if (params.some((p) => p.in === 'path') && !op.responses['404'])
    op.responses['404'] = error('no such desk, item or version (or not visible to this account)');
  // An operation that produces CSV or HTML still answers errors in JSON; Nest's explorer would give them the
  // operation's media type.
  for (const [status, response] of Object.entries(op.responses))
    if (/^[45]\d\d$/.test(status)) {
      const { description } = response as { description: string };
      op.responses[status] = error(description);
    }
}

/**
 * The OpenAPI document of the HTTP application: Nest's explorer reads the routes, their parameters, bodies and the
 * answers documented with `ApiAnswer`; the named response schemas go under `components.schemas`; common error
 * answers are added to each operation. Works on an application created with `preview: true` (no database, no Redis),
 * which is how the build writes the document for the web client's types.
 */
export function buildOpenApiDocument(app: INestApplication, version: string): OpenAPIObject {
  const doc = SwaggerModule.createDocument(
    app,
    new DocumentBuilder()
      .setTitle('Cribra API')
      .setDescription(
        'Triage queue with active learning and split-conformal prediction sets. Authenticate with the session cookie (POST /api/auth/login) or `Authorization: Bearer <token>`.',
      )
      .setVersion(version)
      .addBearerAuth({ type: 'http', scheme: 'bearer', description: 'an API token (cbt_…)' }, OPENAPI_SECURITY.bearer)
      .addCookieAuth('cribra_session', { type: 'apiKey', in: 'cookie' }, OPENAPI_SECURITY.cookie)
      .build(),
  );
  doc.components = { ...doc.components, schemas: { ...doc.components?.schemas, ...namedJsonSchemas() } };
  for (const item of Object.values(doc.paths)) {
    for (const method of METHODS) {
      const op = item[method] as Operation | undefined;
      if (op) addCommonErrors(op);
    }
  }
  return doc;
}
