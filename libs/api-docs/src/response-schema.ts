import { applyDecorators } from '@nestjs/common';
import { ApiProduces, ApiResponse } from '@nestjs/swagger';
import { z } from 'zod';

/**
 * Response schemas: each answer of the API is described once, as a zod schema, and that one description serves three
 * readers. The controller's return type is the schema's output type, so the compiler checks that the handler returns
 * what the document says; the OpenAPI document carries the schema's JSON form (its wire shape); and the tests parse
 * real answers with the schema, so a field the document forgets (objects are strict) fails them.
 */

/** Named schemas, emitted under `components.schemas` and referenced by `$ref`. */
export const answerSchemas = z.registry<{ id: string }>();

const byName = new Map<string, z.ZodType>();

/** Registers a schema under a name in the document (`components.schemas.<id>`); returns it unchanged. */
export function named<S extends z.ZodType>(id: string, schema: S): S {
  const earlier = byName.get(id);
  if (earlier && earlier !== schema) throw new TypeError(`two response schemas are named ${id}`);
  byName.set(id, schema);
  answerSchemas.add(schema, { id });
  return schema;
}

/** The schema registered under a name (the tests parse real answers with it). */
export function schemaNamed(id: string): z.ZodType | undefined {
  return byName.get(id);
}

/** A time: a `Date` in the handler, an ISO 8601 date-time string on the wire. */
export const isoTime = z.codec(z.iso.datetime({ offset: true }), z.date(), {
  decode: (s) => new Date(s),
  encode: (d) => d.toISOString(),
});

/** A role, as every answer names it. */
export const roleSchema = z.enum(['reviewer', 'supervisor', 'auditor', 'admin']);

/** The body of every error answer (Nest's exception filter writes it). */
export const ErrorBody = named(
  'ErrorBody',
  z.looseObject({
    statusCode: z.int(),
    message: z.union([z.string(), z.array(z.string())]).describe('what is wrong, in words'),
    error: z.string().optional(),
  }),
);

/** What a handler may return for a response schema: its output type (dates as `Date`). */
export type Answer<S extends z.ZodType> = z.output<S>;

/**
 * A reference to a named response schema (`components.schemas.<id>`). Answers are always named, so that the web
 * client's generated types have names too.
 */
export function jsonSchemaOf(schema: z.ZodType): { $ref: string } {
  const id = answerSchemas.get(schema)?.id;
  if (!id) throw new TypeError('a response schema must be registered with named(id, schema) before it is documented');
  return { $ref: `#/components/schemas/${id}` };
}

function tidy(ctx: { jsonSchema: Record<string, unknown> }): void {
  const s = ctx.jsonSchema;
  // zod spells out the regular expression behind `format: date-time`, and the safe-integer bounds of every integer:
  // true, but noise in a document people read.
  if (s.format === 'date-time') delete s.pattern;
  if (s.minimum === Number.MIN_SAFE_INTEGER) delete s.minimum;
  if (s.maximum === Number.MAX_SAFE_INTEGER) delete s.maximum;
  delete s.$id;
}

/** Every named schema, for `components.schemas`. */
export function namedJsonSchemas(): Record<string, Record<string, unknown>> {
  const { schemas } = z.toJSONSchema(answerSchemas, {
    io: 'input',
    target: 'openapi-3.0',
    override: tidy,
    uri: (id) => `#/components/schemas/${id}`,
  }) as { schemas: Record<string, Record<string, unknown>> };
  return schemas;
}

/** Documents a JSON answer with its schema (status 200 unless given). */
export function ApiAnswer(schema: z.ZodType, options: { status?: number; description?: string } = {}) {
  return ApiResponse({
    status: options.status ?? 200,
    description: options.description ?? 'done',
    schema: jsonSchemaOf(schema),
  });
}

/** Documents an answer with no body (204 unless given). */
export function ApiNoContent(description: string, status = 204) {
  return ApiResponse({ status, description });
}

/** Documents a text answer (CSV, NDJSON, HTML) by its media type. */
export function ApiTextAnswer(mediaType: string, description: string) {
  return applyDecorators(
    ApiProduces(mediaType),
    ApiResponse({ status: 200, description, content: { [mediaType]: { schema: { type: 'string' } } } }),
  );
}

/** Documents error answers of a handler beyond those every route has (400, 401, 403, 404 are added for it). */
export function ApiErrors(errors: Partial<Record<number, string>>) {
  return applyDecorators(
    ...Object.entries(errors).map(([status, description]) =>
      ApiResponse({ status: Number(status), description, schema: jsonSchemaOf(ErrorBody) }),
    ),
  );
}
