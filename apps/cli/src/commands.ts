import { defineGroup, type CliEntry, type CliGroup } from './cli-command.js';

/**
 * Every command of `cribra` by name, loaded when used: `rehearse` need not load Nest, nor `user add` the learning
 * core. A new command gets its own `*.command.ts` (a `defineCommand` or `defineGroup`) and a line here; `--help`
 * and the parser come with it.
 */
export const COMMANDS: Readonly<Record<string, () => Promise<CliEntry>>> = {
  start: async () => (await import('./start.command.js')).startCommand,
  user: async () => (await import('./user.command.js')).userCommands,
  member: async () => (await import('./member.command.js')).memberCommands,
  migrate: async () => (await import('./migrate.command.js')).migrateCommand,
  rehearse: async () => (await import('./rehearse.command.js')).rehearse,
  backup: async () => (await import('./backup/backup.command.js')).backupCommand,
  restore: async () => (await import('./backup/restore.command.js')).restoreCommand,
  retention: async () => (await import('./retention.command.js')).retentionCommands,
};

/** The top-level group with every command loaded (for `cribra --help`, and the tests that walk every command). */
export async function allCommands(): Promise<CliGroup> {
  return defineGroup({
    name: '',
    summary: 'Cribra, a review queue that learns: operator commands. Settings come from the environment.',
    commands: await Promise.all(Object.values(COMMANDS).map((load) => load())),
  });
}
