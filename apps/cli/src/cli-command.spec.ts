import { describe, expect, it } from 'vitest';
import {
  commandHelp,
  defineCommand,
  memoryIo,
  numberOption,
  parseCommandArgs,
  runEntry,
  UsageError,
  type CliCommand,
  type CliEntry,
} from './cli-command.js';
import { allCommands } from './commands.js';

function leaves(entry: CliEntry): CliCommand[] {
  return entry.kind === 'command' ? [entry] : entry.commands.flatMap(leaves);
}

const sample = defineCommand({
  name: 'sample',
  summary: 'a sample',
  options: {
    name: { type: 'string', value: 'NAME', required: true, description: 'a name' },
    colour: { type: 'string', choices: ['red', 'blue'], value: 'COLOUR', description: 'a colour' },
    tag: { type: 'string', multiple: true, value: 'TAG', description: 'a tag' },
    loud: { type: 'boolean', short: 'l', description: 'shout' },
  },
  run: async ({ values }, io) => {
    io.stdout.write(JSON.stringify(values));
    return 0;
  },
});

describe('the command-line parser', () => {
  it('reads --name value, --name=value, repeated options, booleans and short aliases', () => {
    const { values } = parseCommandArgs(sample, ['--name', 'a', '--colour=red', '--tag', 'x', '--tag', 'y', '-l']);
    expect(values).toEqual({ name: 'a', colour: 'red', tag: ['x', 'y'], loud: true });
  });

  it('refuses unknown options, missing values, stray arguments, bad choices, repeats and missing required ones', () => {
    const cases: Array<[string[], RegExp]> = [
      [['--name', 'a', '--size', '3'], /unknown option --size \(known: --name, --colour, --tag, --loud, --help\)/],
      [['--name'], /--name needs a value/],
      [['--name', 'a', '--loud=yes'], /--loud takes no value/],
      [['--name', 'a', 'extra'], /unexpected argument extra/],
      [['--name', 'a', '--colour', 'green'], /--colour "green": expected one of red, blue/],
      [['--name', 'a', '--name', 'b'], /--name is given 2 times/],
      [['--colour', 'red'], /--name is required/],
    ];
    for (const [argv, message] of cases) expect(() => parseCommandArgs(sample, argv), argv.join(' ')).toThrow(message);
  });

  it('answers a usage error with the message and the usage line on stderr, exit 2', async () => {
    const c = memoryIo();
    expect(await runEntry(sample, ['--colour', 'red'], c.io)).toBe(2);
    expect(c.err()).toContain('sample: --name is required');
    expect(c.err()).toContain('usage: cribra sample --name NAME [--colour COLOUR] [--tag TAG] [--loud]');
    expect(c.out()).toBe('');
  });

  it('prints help on stdout with every option described, exit 0, even when required options are missing', async () => {
    const c = memoryIo();
    expect(await runEntry(sample, ['--help'], c.io)).toBe(0);
    expect(c.out()).toMatch(/--colour COLOUR +a colour \(one of red, blue\)/);
    expect(c.out()).toMatch(/-l, --loud +shout/);
    expect(c.out()).toMatch(/-h, --help +show this help/);
  });

  it('checks numbers with a message that names the option and the range', () => {
    expect(numberOption('workers', undefined, 1, { integer: true })).toBe(1);
    expect(numberOption('workers', '3', 1, { integer: true, min: 0, max: 16 })).toBe(3);
    expect(() => numberOption('workers', '17', 1, { integer: true, min: 0, max: 16 })).toThrow(
      new UsageError('--workers "17": expected a whole number from 0 to 16'),
    );
    expect(() => numberOption('target', '1', 0.9, { min: 0, max: 1, exclusiveMin: true, exclusiveMax: true })).toThrow(
      /--target "1": expected a number strictly between 0 and 1/,
    );
    expect(() => numberOption('seed', '1.5', 1, { integer: true })).toThrow(/expected a whole number/);
    expect(() => numberOption('seed', '', 1, {})).toThrow(/expected a number/);
  });
});

describe('every cribra command', () => {
  it('has --help that describes each of its options, and the top level lists every command', async () => {
    const top = await allCommands();
    const commands = leaves(top);
    expect(commands.map((c) => c.name)).toEqual(expect.arrayContaining(['start', 'user add', 'migrate', 'rehearse']));
    for (const command of commands) {
      const c = memoryIo();
      expect(await runEntry(top, [...command.name.split(' '), '--help'], c.io), command.name).toBe(0);
      expect(c.out()).toBe(commandHelp(command));
      expect(command.summary.length, command.name).toBeGreaterThan(10);
      for (const [name, option] of Object.entries(command.options)) {
        expect(option.description.length, `${command.name} --${name}`).toBeGreaterThan(5);
        expect(c.out(), `${command.name} --${name}`).toContain(`--${name}`);
        const flat = c.out().replace(/\s+/g, ' ');
        expect(flat, `${command.name} --${name}`).toContain(option.description);
      }
    }
    const c = memoryIo();
    expect(await runEntry(top, ['--help'], c.io)).toBe(0);
    for (const entry of top.commands) expect(c.out().replace(/\s+/g, ' ')).toContain(entry.summary);
  });
});
