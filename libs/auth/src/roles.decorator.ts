import { SetMetadata, createParamDecorator, type ExecutionContext } from '@nestjs/common';
import type { Role } from '#database';
import type { Principal } from './principal.js';

export const ROLES_KEY = 'cribra:roles';
export const PUBLIC_KEY = 'cribra:public';

/**
 * The roles allowed on a route. Every route must carry this or {@link Public}:
 * the guard refuses a route that has neither, so a forgotten decorator denies.
 */
export const Roles = (...roles: Role[]) => SetMetadata(ROLES_KEY, roles);

/** A route anyone may call (health checks, sign-in). */
export const Public = () => SetMetadata(PUBLIC_KEY, true);

/** The request's {@link Principal}. */
export const CurrentUser = createParamDecorator((_: unknown, ctx: ExecutionContext): Principal => {
  const req = ctx.switchToHttp().getRequest<{ principal?: Principal }>();
  if (!req.principal) throw new Error('CurrentUser used on a route without authentication');
  return req.principal;
});
