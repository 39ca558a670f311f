export {
  answerSchemas,
  ApiAnswer,
  ApiErrors,
  ApiNoContent,
  ApiTextAnswer,
  ErrorBody,
  isoTime,
  jsonSchemaOf,
  named,
  namedJsonSchemas,
  roleSchema,
  schemaNamed,
  type Answer,
} from './response-schema.js';
export { buildOpenApiDocument, OPENAPI_SECURITY } from './openapi-document.js';
export { z } from 'zod';
