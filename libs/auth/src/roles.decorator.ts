import { SetMetadata, applyDecorators, createParamDecorator, type ExecutionContext } from '@nestjs/common';
import { ApiBearerAuth, ApiCookieAuth } from '@nestjs/swagger';
import { ApiErrors, OPENAPI_SECURITY } from '#api-docs';
import type { Role } from '#database';
import type { Principal } from './principal.js';

export const ROLES_KEY = 'cribra:roles';
export const PUBLIC_KEY = 'cribra:public';

/**
 * The roles allowed on a route. Every route must carry this or {@link Public}:
 * the guard refuses a route that has neither, so a forgotten decorator denies.
 * It also declares the route's security (a bearer token or the session cookie)
 * and its 401 and 403 answers in the API document.
 */
export const Roles = (...roles: Role[]) =>
  applyDecorators(
    SetMetadata(ROLES_KEY, roles),
    ApiBearerAuth(OPENAPI_SECURITY.bearer),
    ApiCookieAuth(OPENAPI_SECURITY.cookie),
    ApiErrors({ 401: 'not signed in', 403: `for ${roles.join(', ')} only` }),
  );

/** A route anyone may call (health checks, sign-in). */
export const Public = () => SetMetadata(PUBLIC_KEY, true);

/** The request's {@link Principal}. */
export const CurrentUser = createParamDecorator((_: unknown, ctx: ExecutionContext): Principal => {
  const req = ctx.switchToHttp().getRequest<{ principal?: Principal }>();
  if (!req.principal) throw new Error('CurrentUser used on a route without authentication');
  return req.principal;
});
