import { MEMBER_ROLES, type MemberRole } from '#database';
import { defineCommand, defineGroup, numberOption } from './cli-command.js';
import { CLI_ACTOR, userIdByName, withAccounts } from './user.command.js';

const DESK_OPTION = {
  desk: { type: 'string', value: 'ID', required: true, description: 'the desk id (as in /desks/ID)' },
} as const;

const deskIdOf = (raw: string | undefined) => numberOption('desk', raw, 0, { integer: true, min: 1 });

const memberLine = (m: { userId: number; name: string; role: MemberRole; disabled: boolean; since: Date }) =>
  `${JSON.stringify({ userId: m.userId, name: m.name, role: m.role, disabled: m.disabled, since: m.since.toISOString() })}\n`;

/** `member add`: as PUT /api/desks/:deskId/members/:userId. */
export const memberAddCommand = defineCommand({
  name: 'member add',
  summary: 'make a user a member of a desk, or change their role there',
  description:
    'Gives the user this role on the desk (reviewer, supervisor or auditor); a member already gets the new role. ' +
    'The desk keeps at least one supervisor. Prints the membership as one JSON line.',
  options: {
    ...DESK_OPTION,
    user: { type: 'string', value: 'NAME', required: true, description: 'the account name' },
    role: { type: 'string', value: 'ROLE', required: true, choices: MEMBER_ROLES, description: 'the role on the desk' },
  },
  async run({ values }, io) {
    const deskId = deskIdOf(values.desk);
    const { MembershipService } = await import('#auth');
    return withAccounts(io, async (app) => {
      const userId = await userIdByName(app, values.user as string);
      io.stdout.write(
        memberLine(await app.get(MembershipService).put(CLI_ACTOR, deskId, userId, values.role as MemberRole)),
      );
      return 0;
    });
  },
});

/** `member remove`: as DELETE /api/desks/:deskId/members/:userId. */
export const memberRemoveCommand = defineCommand({
  name: 'member remove',
  summary: 'take a user off a desk',
  description: 'The user no longer sees the desk. The last supervisor of a desk cannot be removed.',
  options: {
    ...DESK_OPTION,
    user: { type: 'string', value: 'NAME', required: true, description: 'the account name' },
  },
  async run({ values }, io) {
    const deskId = deskIdOf(values.desk);
    const { MembershipService } = await import('#auth');
    return withAccounts(io, async (app) => {
      await app.get(MembershipService).remove(CLI_ACTOR, deskId, await userIdByName(app, values.user as string));
      return 0;
    });
  },
});

/** `member list`: as GET /api/desks/:deskId/members. */
export const memberListCommand = defineCommand({
  name: 'member list',
  summary: "list a desk's members",
  description: 'Prints one line per member, by name: {"userId","name","role","disabled","since"}.',
  options: DESK_OPTION,
  async run({ values }, io) {
    const deskId = deskIdOf(values.desk);
    const { AuthNotFound, MembershipService } = await import('#auth');
    const { Database, DeskEntity } = await import('#database');
    return withAccounts(io, async (app) => {
      if (!(await app.get(Database).manager.existsBy(DeskEntity, { id: deskId })))
        throw new AuthNotFound(`no desk ${deskId}`);
      for (const m of await app.get(MembershipService).list(deskId)) io.stdout.write(memberLine(m));
      return 0;
    });
  },
});

/** `member …`: who is on which desk, with which role. */
export const memberCommands = defineGroup({
  name: 'member',
  summary: "manage desks' members and their roles",
  commands: [memberAddCommand, memberRemoveCommand, memberListCommand],
});
