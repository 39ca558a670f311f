import { NotFound } from '#errors';

/**
 * The one rule for a desk that is not there: `found` (whatever the caller looked the desk up as: its directory entry,
 * its row, the caller's membership) when there is one, else 404 `no desk N`. A desk the caller may not see is
 * answered the same way, so that its existence is not given away.
 */
export function deskOr404<T>(deskId: number | string, found: T | null | undefined): T {
  if (found === null || found === undefined) throw new NotFound(`no desk ${deskId}`);
  return found;
}
