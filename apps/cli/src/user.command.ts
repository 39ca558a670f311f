import type { INestApplicationContext } from '@nestjs/common';
import { loadConfigOrExit } from '#config';
import { ROLES, type Role } from '#database';
import { defineCommand, defineGroup, UsageError, type CliIo } from './cli-command.js';

/** Who the audit trail names for changes made from the command line. */
export const CLI_ACTOR = { id: null, name: 'cli' };

/**
 * Runs `fn` with the accounts' services (Nest application context: configuration, database, audit, accounts and
 * memberships; no Redis). An account rule that refuses the change (AuthError: unknown user, last admin, last
 * supervisor, a taken name, a weak password) prints its message and exits 1. Loaded inside so that `--help` stays quick.
 */
export async function withAccounts(io: CliIo, fn: (app: INestApplicationContext) => Promise<number>): Promise<number> {
  const config = loadConfigOrExit();
  await import('reflect-metadata');
  const { Module } = await import('@nestjs/common');
  const { NestFactory } = await import('@nestjs/core');
  const { AuditModule } = await import('#audit');
  const { AuthCoreModule, AuthError } = await import('#auth');
  const { ConfigModule } = await import('#config');
  const { DatabaseModule } = await import('#database');
  @Module({ imports: [ConfigModule.forRoot(config), DatabaseModule.forRoot(), AuditModule, AuthCoreModule] })
  class AccountsCliModule {}
  const app = await NestFactory.createApplicationContext(AccountsCliModule, { logger: ['error'] });
  try {
    return await fn(app);
  } catch (e) {
    if (e instanceof AuthError) {
      io.stderr.write(`${e.message}\n`);
      return 1;
    }
    throw e;
  } finally {
    await app.close();
  }
}

/** The id of the account named `name`; AuthNotFound (exit 1) when there is none. */
export async function userIdByName(app: INestApplicationContext, name: string): Promise<number> {
  const { AuthNotFound } = await import('#auth');
  const { Database, UserEntity } = await import('#database');
  const user = await app.get(Database).manager.findOneBy(UserEntity, { name });
  if (!user) throw new AuthNotFound(`no user named ${JSON.stringify(name)}`);
  return user.id;
}

const userLine = (u: { id: number; name: string; role: Role; disabled: boolean }) =>
  `${JSON.stringify({ id: u.id, name: u.name, role: u.role, disabled: u.disabled })}\n`;

async function readStdin(): Promise<string> {
  const chunks: Buffer[] = [];
  for await (const c of process.stdin) chunks.push(c as Buffer);
  return Buffer.concat(chunks)
    .toString('utf8')
    .replace(/\r?\n$/, '');
}

/** `user add`: creates a user and prints `{"id","name","role","token"}` on one line; the token is shown once. */
export const userAddCommand = defineCommand({
  name: 'user add',
  summary: 'create an account and print its API token once',
  description:
    'Creates an account and prints {"id","name","role","token"} on one line. The token (cbt_…) is shown only this ' +
    'once; keep it. Without --password-stdin the account signs in with its token only.',
  options: {
    name: { type: 'string', value: 'NAME', required: true, description: 'the account name, used to sign in' },
    role: { type: 'string', value: 'ROLE', required: true, choices: ROLES, description: 'the global role' },
    'password-stdin': {
      type: 'boolean',
      description:
        'read a password from standard input, for signing in to the screens (8 characters or more, not a common one)',
    },
  },
  async run({ values }, io) {
    const name = values.name as string;
    const role = values.role as Role;
    const password = values['password-stdin'] ? await readStdin() : undefined;
    // Loaded here so that `--help` does not start Nest.
    const { AuthService, passwordProblem } = await import('#auth');
    const problem = password !== undefined ? passwordProblem(password, { userName: name }) : null;
    if (problem) throw new UsageError(`the password read from stdin is refused: ${problem}`);
    return withAccounts(io, async (app) => {
      const { user, token } = await app.get(AuthService).createUser(CLI_ACTOR, { name, role, password });
      io.stdout.write(`${JSON.stringify({ id: user.id, name: user.name, role: user.role, token })}\n`);
      return 0;
    });
  },
});

/** `user list`: every account, one JSON line each. */
export const userListCommand = defineCommand({
  name: 'user list',
  summary: 'list the accounts',
  description: 'Prints one line per account, oldest first: {"id","name","role","disabled"}.',
  options: {},
  async run(_args, io) {
    const { AuthService } = await import('#auth');
    return withAccounts(io, async (app) => {
      for (const u of await app.get(AuthService).listUsers()) io.stdout.write(userLine(u));
      return 0;
    });
  },
});

const NAME_OPTION = {
  name: { type: 'string', value: 'NAME', required: true, description: 'the account name' },
} as const;

/** Changes one account through AuthService.updateUser, as PATCH /api/users/:userId does, and prints it. */
async function changeUser(
  io: CliIo,
  name: string,
  change: { role?: Role; disabled?: boolean; password?: string },
): Promise<number> {
  const { AuthService } = await import('#auth');
  return withAccounts(io, async (app) => {
    const id = await userIdByName(app, name);
    io.stdout.write(userLine(await app.get(AuthService).updateUser(CLI_ACTOR, id, change)));
    return 0;
  });
}

export const userDisableCommand = defineCommand({
  name: 'user disable',
  summary: 'disable an account and revoke its sessions and tokens',
  description:
    'The account can no longer sign in, and every session and API token it holds stops working at once. Its ' +
    'memberships stay (unusable while disabled). The last enabled admin cannot be disabled.',
  options: NAME_OPTION,
  run: ({ values }, io) => changeUser(io, values.name as string, { disabled: true }),
});

export const userEnableCommand = defineCommand({
  name: 'user enable',
  summary: 'enable a disabled account',
  description: 'The account can sign in again; its revoked tokens stay revoked.',
  options: NAME_OPTION,
  run: ({ values }, io) => changeUser(io, values.name as string, { disabled: false }),
});

export const userPasswordCommand = defineCommand({
  name: 'user password',
  summary: "reset an account's password (read from standard input)",
  description:
    'Reads the new password from standard input (8 characters or more, not a common one). Every session and API ' +
    'token of the account is revoked.',
  options: NAME_OPTION,
  async run({ values }, io) {
    const name = values.name as string;
    const password = await readStdin();
    const { passwordProblem } = await import('#auth');
    const problem = passwordProblem(password, { userName: name });
    if (problem) throw new UsageError(`the password read from stdin is refused: ${problem}`);
    return changeUser(io, name, { password });
  },
});

export const userRoleCommand = defineCommand({
  name: 'user role',
  summary: "change an account's global role",
  description:
    'The global role decides who may create desks (supervisor) and manage accounts (admin); what a user may do on ' +
    'a desk is their role there (`cribra member`). The last enabled admin cannot be demoted.',
  options: {
    ...NAME_OPTION,
    role: { type: 'string', value: 'ROLE', required: true, choices: ROLES, description: 'the new global role' },
  },
  run: ({ values }, io) => changeUser(io, values.name as string, { role: values.role as Role }),
});

/** `user …`: account commands. */
export const userCommands = defineGroup({
  name: 'user',
  summary: 'manage accounts',
  commands: [
    userAddCommand,
    userListCommand,
    userDisableCommand,
    userEnableCommand,
    userPasswordCommand,
    userRoleCommand,
  ],
});
