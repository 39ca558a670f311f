import 'reflect-metadata';
import { Module } from '@nestjs/common';
import { NestFactory } from '@nestjs/core';
import { AuditModule } from '#audit';
import { AuthCoreModule, AuthError, AuthService } from '#auth';
import { ConfigModule, loadConfigOrExit } from '#config';
import { DatabaseModule, ROLES, type Role } from '#database';
import { parseFlags } from './args.js';

const USAGE = 'usage: cribra user add --name NAME --role reviewer|supervisor|auditor|admin [--password-stdin]';

async function readStdin(): Promise<string> {
  const chunks: Buffer[] = [];
  for await (const c of process.stdin) chunks.push(c as Buffer);
  return Buffer.concat(chunks)
    .toString('utf8')
    .replace(/\r?\n$/, '');
}

/** `user add`: creates a user and prints `{"id","name","role","token"}` on one line; the token is shown once. */
export async function userCommand(argv: string[]): Promise<number> {
  const [sub, ...rest] = argv;
  if (sub !== 'add') {
    process.stderr.write(`${USAGE}\n`);
    return 2;
  }
  let flags;
  try {
    flags = parseFlags(rest, { name: 'string', role: 'string', 'password-stdin': 'boolean' });
  } catch (e) {
    process.stderr.write(`${(e as Error).message}\n${USAGE}\n`);
    return 2;
  }
  const name = flags.name as string | undefined;
  const role = flags.role as string | undefined;
  if (!name || !role) {
    process.stderr.write(`--name and --role are required\n${USAGE}\n`);
    return 2;
  }
  if (!ROLES.includes(role as Role)) {
    process.stderr.write(`--role ${JSON.stringify(role)}: expected one of ${ROLES.join(', ')}\n`);
    return 2;
  }
  const password = flags['password-stdin'] ? await readStdin() : undefined;
  if (password !== undefined && password.length < 8) {
    process.stderr.write('the password read from stdin must have at least 8 characters\n');
    return 2;
  }
  const config = loadConfigOrExit();
  @Module({ imports: [ConfigModule.forRoot(config), DatabaseModule.forRoot(), AuditModule, AuthCoreModule] })
  class UserCliModule {}
  const app = await NestFactory.createApplicationContext(UserCliModule, { logger: ['error'] });
  try {
    const { user, token } = await app
      .get(AuthService)
      .createUser({ id: null, name: 'cli' }, { name, role: role as Role, password });
    process.stdout.write(`${JSON.stringify({ id: user.id, name: user.name, role: user.role, token })}\n`);
    return 0;
  } catch (e) {
    if (e instanceof AuthError) {
      process.stderr.write(`${e.message}\n`);
      return 1;
    }
    throw e;
  } finally {
    await app.close();
  }
}
