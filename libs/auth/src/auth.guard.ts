import {
  BadRequestException,
  ForbiddenException,
  NotFoundException,
  Inject,
  Injectable,
  UnauthorizedException,
  type CanActivate,
  type ExecutionContext,
} from '@nestjs/common';
import { Reflector } from '@nestjs/core';
import type { Role } from '#database';
import { AuthError, AuthService } from './auth.service.js';
import { DESK_PARAMS, DESK_SCOPE_KEY, type DeskAccess, type DeskScope } from './members/desk-scope.decorator.js';
import { MembershipService } from './members/membership.service.js';
import { SESSION_COOKIE, type Principal } from './principal.js';
import { PUBLIC_KEY, ROLES_KEY } from './roles.decorator.js';
import { crossSiteRefusal } from './same-origin.js';

interface RequestLike {
  headers: Record<string, string | string[] | undefined>;
  method: string;
  params?: Record<string, string | undefined>;
  principal?: Principal;
  desk?: DeskAccess;
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
 *
 * On a route declared with `@OnDesk` the roles are those the caller holds on
 * that desk (desk_members), and someone who is not a member gets the same 404
 * as for a desk that does not exist. Elsewhere they are the account's role.
 */
@Injectable()
export class AuthGuard implements CanActivate {
  constructor(
    @Inject(Reflector) private readonly reflector: Reflector,
    @Inject(AuthService) private readonly auth: AuthService,
    @Inject(MembershipService) private readonly members: MembershipService,
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
    const scope = this.reflector.getAllAndOverride<DeskScope | undefined>(DESK_SCOPE_KEY, targets);
    if (scope) {
      req.desk = await this.deskAccess(scope, req, principal, roles ?? []);
      return true;
    }
    const undeclared = Object.keys(req.params ?? {}).find((p) => p in DESK_PARAMS);
    if (undeclared) throw new Error(`the route takes :${undeclared} but declares no desk scope (@OnDesk)`);
    if (!roles || !roles.includes(principal.role)) {
      throw new ForbiddenException(
        `the ${principal.role} role may not do this${roles ? ` (allowed: ${roles.join(', ')})` : ''}`,
      );
    }
    return true;
  }

  /** The desk a scoped request acts on, if the caller may act there: 404 for non-members, 403 for a role not allowed. */
  private async deskAccess(
    scope: DeskScope,
    req: RequestLike,
    principal: Principal,
    roles: Role[],
  ): Promise<DeskAccess> {
    const raw = req.params?.[scope.param] ?? '';
    let access: DeskAccess | null;
    try {
      access = await this.members.access(scope.kind, raw, principal.id);
    } catch (e) {
      if (e instanceof AuthError) throw new BadRequestException(e.message);
      throw e;
    }
    const notFound = new NotFoundException(`no ${scope.kind} ${raw}`);
    if (!access) throw notFound;
    if (principal.role === 'admin' && roles.includes('admin')) return access;
    if (access.role === null) throw notFound;
    if (!roles.includes(access.role))
      throw new ForbiddenException(
        `the ${access.role} role on desk ${access.deskId} may not do this (allowed: ${roles.join(', ')})`,
      );
    return access;
  }
}
