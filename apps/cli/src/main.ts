#!/usr/bin/env node
/**
 * Operator command line: `cribra <command> [options]` (the package's `bin`), or `npm run cli -- …` from a checkout.
 * Each command lives in its own `*.command.ts`, declared with `defineCommand`; `commands.ts` lists them.
 */
import { readFileSync } from 'node:fs';
import { groupHelp, runEntry, type CliIo } from './cli-command.js';
import { allCommands, COMMANDS } from './commands.js';

function version(): string {
  const file = new URL('../../../../package.json', import.meta.url);
  return (JSON.parse(readFileSync(file, 'utf8')) as { version: string }).version;
}

async function main(argv: string[], io: CliIo): Promise<number> {
  const name = argv.at(0);
  const rest = argv.slice(1);
  if (name === '--version' || name === '-v') {
    io.stdout.write(`${version()}\n`);
    return 0;
  }
  const topic = rest.at(0);
  if (name === 'help' && topic !== undefined && Object.hasOwn(COMMANDS, topic))
    return runEntry(await COMMANDS[topic](), [...rest.slice(1), '--help'], io);
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    (name === undefined ? io.stderr : io.stdout).write(groupHelp(await allCommands()));
    return name === undefined ? 2 : 0;
  }
  if (!Object.hasOwn(COMMANDS, name)) {
    io.stderr.write(`unknown command ${JSON.stringify(name)}\n\n${groupHelp(await allCommands())}`);
    return 2;
  }
  return runEntry(await COMMANDS[name](), rest, io);
}

process.exitCode = await main(process.argv.slice(2), process);
