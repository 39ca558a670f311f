import {
  BadRequestException,
  HttpException,
  Injectable,
  PayloadTooLargeException,
  UnsupportedMediaTypeException,
  type CallHandler,
  type ExecutionContext,
  type NestInterceptor,
} from '@nestjs/common';
import type { Reflector } from '@nestjs/core';
import express from 'express';
import { from, switchMap, type Observable } from 'rxjs';
import { PUBLIC_KEY } from '#auth';

/** Paths whose bodies are streamed by their handler, never parsed into memory. */
const STREAMED_BODY = /^\/api\/desks\/[^/]+\/imports\/?$/i;

/** What a JSON body may hold. */
export interface JsonLimits {
  /** Largest body, in bytes (413 beyond). */
  bytes: number;
  /** Deepest nesting of objects and arrays (400 beyond). */
  depth: number;
  /** Most object members and array elements, counted over the whole body (400 beyond). */
  members: number;
}

/** Signed-in routes: desk settings with 20 categories of 200 seed terms each fit with room to spare. */
export const SIGNED_IN_LIMITS: JsonLimits = { bytes: 1024 * 1024, depth: 16, members: 20_000 };
/** Public routes (the sign-in): a name and a password. */
export const PUBLIC_LIMITS: JsonLimits = { bytes: 8 * 1024, depth: 4, members: 50 };

const QUOTE = 0x22;
const BACKSLASH = 0x5c;
const OPEN = new Set([0x7b, 0x5b]); // { [
const CLOSE = new Set([0x7d, 0x5d]); // } ]
const COMMA = 0x2c;
const COLON = 0x3a;

/**
 * Why a JSON text breaks the limits, or null: one pass over the bytes, before anything is parsed, so that neither
 * the parser nor the validation that walks the parsed value ever meets a body nested thousands deep or holding
 * hundreds of thousands of members. Counts colons and commas outside strings (each marks one more member or
 * element); a malformed text is left to the parser to refuse.
 */
export function jsonLimitProblem(buf: Uint8Array, limits: JsonLimits): string | null {
  let depth = 0;
  let members = 0;
  let inString = false;
  for (let i = 0; i < buf.length; i++) {
    const b = buf[i];
    if (inString) {
      if (b === BACKSLASH) i++;
      else if (b === QUOTE) inString = false;
      continue;
    }
    if (b === QUOTE) inString = true;
    else if (OPEN.has(b)) {
      if (++depth > limits.depth) return `the JSON body is nested deeper than ${limits.depth} levels`;
    } else if (CLOSE.has(b)) depth--;
    else if (b === COMMA || b === COLON) {
      if (++members > limits.members) return `the JSON body holds more than ${limits.members} members`;
    }
  }
  return null;
}

class JsonLimitError extends Error {
  readonly status = 400;
  readonly type = 'entity.verify.failed';
}

function jsonParser(limits: JsonLimits): express.RequestHandler {
  return express.json({
    limit: limits.bytes,
    verify: (_req, _res, buf) => {
      const problem = jsonLimitProblem(buf, limits);
      if (problem) throw new JsonLimitError(problem);
    },
  });
}

/** body-parser's errors as the API's own answers. */
function toHttp(e: unknown, limits: JsonLimits): HttpException {
  const err = e as { type?: string; status?: number; message?: string };
  switch (err.type) {
    case 'entity.too.large':
      return new PayloadTooLargeException(`the body is larger than ${limits.bytes} bytes`);
    case 'entity.verify.failed':
      return new BadRequestException(err.message);
    case 'entity.parse.failed':
      return new BadRequestException(`the body is not valid JSON: ${err.message}`);
    case 'encoding.unsupported':
    case 'charset.unsupported':
      return new UnsupportedMediaTypeException(err.message);
    default:
      return new HttpException(err.message ?? 'the body could not be read', err.status ?? 400);
  }
}

/**
 * Reads a JSON body only once the guard has let the request in: an anonymous caller's body is never read, except on
 * a public route (the sign-in), where it may be 8 kB. Each body is checked for size, depth and member count before
 * it is parsed. Runs before the pipes, so validation sees the parsed body.
 */
@Injectable()
export class JsonBodyInterceptor implements NestInterceptor {
  private readonly signedIn = jsonParser(SIGNED_IN_LIMITS);
  private readonly public_ = jsonParser(PUBLIC_LIMITS);

  constructor(private readonly reflector: Reflector) {}

  intercept(ctx: ExecutionContext, next: CallHandler): Observable<unknown> {
    if (ctx.getType() !== 'http') return next.handle();
    const http = ctx.switchToHttp();
    const req = http.getRequest<express.Request>();
    if (STREAMED_BODY.test(req.path)) return next.handle();
    const isPublic = this.reflector.getAllAndOverride<boolean | undefined>(PUBLIC_KEY, [
      ctx.getHandler(),
      ctx.getClass(),
    ]);
    const [parse, limits] = isPublic ? [this.public_, PUBLIC_LIMITS] : [this.signedIn, SIGNED_IN_LIMITS];
    const read = new Promise<void>((resolve, reject) => {
      parse(req, http.getResponse<express.Response>(), (e?: unknown) => {
        if (e) reject(toHttp(e, limits));
        else resolve();
      });
    });
    return from(read).pipe(switchMap(() => next.handle()));
  }
}
