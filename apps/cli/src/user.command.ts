import { loadConfigOrExit } from '#config';
import { ROLES, type Role } from '#database';
import { defineCommand, defineGroup, UsageError } from './cli-command.js';

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
    const { AuthCoreModule, AuthError, AuthService, passwordProblem } = await import('#auth');
    const problem = password !== undefined ? passwordProblem(password, { userName: name }) : null;
    if (problem) throw new UsageError(`the password read from stdin is refused: ${problem}`);
    const config = loadConfigOrExit();
    await import('reflect-metadata');
    const { Module } = await import('@nestjs/common');
    const { NestFactory } = await import('@nestjs/core');
    const { AuditModule } = await import('#audit');
    const { ConfigModule } = await import('#config');
    const { DatabaseModule } = await import('#database');
    @Module({ imports: [ConfigModule.forRoot(config), DatabaseModule.forRoot(), AuditModule, AuthCoreModule] })
    class UserCliModule {}
    const app = await NestFactory.createApplicationContext(UserCliModule, { logger: ['error'] });
    try {
      const { user, token } = await app
        .get(AuthService)
        .createUser({ id: null, name: 'cli' }, { name, role, password });
      io.stdout.write(`${JSON.stringify({ id: user.id, name: user.name, role: user.role, token })}\n`);
      return 0;
    } catch (e) {
      if (e instanceof AuthError) {
        io.stderr.write(`${e.message}\n`);
        return 1;
      }
      throw e;
    } finally {
      await app.close();
    }
  },
});

/** `user …`: account commands. */
export const userCommands = defineGroup({
  name: 'user',
  summary: 'manage accounts',
  commands: [userAddCommand],
});
