import { SetMetadata, createParamDecorator, type ExecutionContext } from '@nestjs/common';
import type { MemberRole } from '#database';

export const DESK_SCOPE_KEY = 'cribra:desk-scope';

/** What a route parameter names, from which the guard finds the desk a request acts on. */
export type DeskScopeKind = 'desk' | 'item' | 'lease' | 'import' | 'verdict';

/** A route's desk scope: the kind of thing its parameter `param` names. */
export interface DeskScope {
  kind: DeskScopeKind;
  param: string;
}

/**
 * Path parameters that name something on a desk. A route with one of them must declare its desk scope with
 * {@link OnDesk}: the guard refuses it otherwise (500), so a forgotten declaration never serves another desk's data.
 */
export const DESK_PARAMS: Record<string, DeskScopeKind> = {
  deskId: 'desk',
  itemId: 'item',
  leaseId: 'lease',
  importId: 'import',
  verdictId: 'verdict',
};

/**
 * Declares that a route acts on one desk, found from the path parameter `param` (`deskId` by default): a desk id,
 * or the id of an item, lease, import or verdict (`OnDesk('itemId')`), whose desk the guard looks up. The guard then
 * answers 404 to anyone who is not a member of that desk (the desk's existence is not revealed), and checks the
 * route's {@link Roles} against the caller's role on that desk; `admin` among them lets a global admin in on any desk.
 */
export const OnDesk = (param = 'deskId') => {
  const kind = DESK_PARAMS[param] as DeskScopeKind | undefined;
  if (!kind) throw new TypeError(`OnDesk: ${param} is not one of ${Object.keys(DESK_PARAMS).join(', ')}`);
  return SetMetadata(DESK_SCOPE_KEY, { kind, param } satisfies DeskScope);
};

/** What the guard found out about a desk-scoped request. */
export interface DeskAccess {
  deskId: number;
  /** The caller's role on the desk; null for a global admin who is not a member. */
  role: MemberRole | null;
}

/** The {@link DeskAccess} of a route declared with {@link OnDesk}. */
export const CurrentDesk = createParamDecorator((_: unknown, ctx: ExecutionContext): DeskAccess => {
  const req = ctx.switchToHttp().getRequest<{ desk?: DeskAccess }>();
  if (!req.desk) throw new Error('CurrentDesk used on a route without @OnDesk');
  return req.desk;
});
