import { isoTime, named, z } from '#api-docs';
import { MEMBER_ROLES } from '#database';

/** One member of a desk. */
export const MemberAnswer = named(
  'Member',
  z.strictObject({
    userId: z.int(),
    name: z.string(),
    role: z.enum(MEMBER_ROLES).describe('the role on this desk'),
    disabled: z.boolean().describe('the account is disabled: the membership stays but cannot be used'),
    since: isoTime.describe('when the user became a member'),
  }),
);

export const MemberListAnswer = named('MemberList', z.strictObject({ members: z.array(MemberAnswer) }));
