import {
  ForbiddenException,
  Inject,
  Injectable,
  UnauthorizedException,
  type CanActivate,
  type ExecutionContext,
} from '@nestjs/common';
import { Reflector } from '@nestjs/core';
import type { Role } from '#database';
import { AuthService } from './auth.service.js';
import { SESSION_COOKIE, type Principal } from './principal.js';
import { PUBLIC_KEY, ROLES_KEY } from './roles.decorator.js';
import { crossSiteRefusal } from './same-origin.js';

interface RequestLike {
  headers: Record<string, string | string[] | undefined>;
  method: string;
  principal?: Principal;
}

/** Reads one cookie from a Cookie header. */
export function readCookie(header: string | string[] | undefined, name: string): string | null {
  const raw = Array.isArray(header) ? header.join('; ') : header;
  if (!raw) return null;
  for (const part of raw.split(';')) {
    const eq = part.indexOf('=');
    if (eq > 0 && part.slice(0, eq).trim() === name) return decodeURIComponent(part.slice(eq + 1).trim());
  }
  return null;
}

/** The secret of an `Authorization: Bearer …` header, or null. */
export function bearerOf(header: string | string[] | undefined): string | null {
  return typeof header === 'string' && /^Bearer\s+/i.test(header) ? header.replace(/^Bearer\s+/i, '').trim() : null;
}

/**
 * The one gate of the HTTP API: refuses a cross-site change made with the
 * browser's cookie, authenticates by session cookie or bearer token, then
 * checks the route's roles. A route without a roles decision is
 * refused, so nothing is open by omission.
 */
@Injectable()
export class AuthGuard implements CanActivate {
  constructor(
    @Inject(Reflector) private readonly reflector: Reflector,
    @Inject(AuthService) private readonly auth: AuthService,
  ) {}

  async canActivate(ctx: ExecutionContext): Promise<boolean> {
    const targets = [ctx.getHandler(), ctx.getClass()];
    const req = ctx.switchToHttp().getRequest<RequestLike>();
    const bearer = bearerOf(req.headers.authorization);
    // A page on another site can make a browser send the cookie (or sign in), never a bearer token.
    const refusal = bearer === null ? crossSiteRefusal(req) : null;
    if (refusal) throw new ForbiddenException(refusal);
    if (this.reflector.getAllAndOverride<boolean>(PUBLIC_KEY, targets)) return true;
    const secret = bearer ?? readCookie(req.headers.cookie, SESSION_COOKIE);
    const principal = secret ? await this.auth.authenticate(secret) : null;
    if (!principal) throw new UnauthorizedException('sign in first (session cookie or Authorization: Bearer token)');
    req.principal = principal;
    const roles = this.reflector.getAllAndOverride<Role[] | undefined>(ROLES_KEY, targets);
    if (!roles || !roles.includes(principal.role)) {
      throw new ForbiddenException(
        `the ${principal.role} role may not do this${roles ? ` (allowed: ${roles.join(', ')})` : ''}`,
      );
    }
    return true;
  }
}
