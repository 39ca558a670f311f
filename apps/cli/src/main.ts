#!/usr/bin/env node
/**
 * Operator command line: `npm run cli -- <command> [options]`.
 * Each command lives in its own `*.command.ts` file and returns an exit code.
 */
type Command = (argv: string[]) => Promise<number>;

const commands: Record<string, () => Promise<Command>> = {
  start: async () => (await import('./start.command.js')).startCommand,
  user: async () => (await import('./user.command.js')).userCommand,
  migrate: async () => (await import('./migrate.command.js')).migrateCommand,
  rehearse: async () => (await import('./rehearse.command.js')).rehearseCommand,
};

async function main(): Promise<void> {
  const [name, ...rest] = process.argv.slice(2);
  const load = name ? commands[name] : undefined;
  if (!load) {
    process.stderr.write(`usage: cribra <${Object.keys(commands).join('|')}> [options]\n`);
    process.exitCode = 2;
    return;
  }
  const run = await load();
  process.exitCode = await run(rest);
}

await main();
