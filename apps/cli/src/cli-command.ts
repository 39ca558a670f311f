import { parseArgs } from 'node:util';

/**
 * The operator command line's one argument parser: every command declares its options in a table (with a description
 * each), Node's `util.parseArgs` reads them strictly, and `--help` (or `-h`) prints the table. Exit codes: 0 done,
 * 1 failed, 2 bad usage.
 */

/** One option of a command. */
export interface CliOption {
  readonly type: 'string' | 'boolean';
  /** One line for `--help`. */
  readonly description: string;
  /** Placeholder of the value in the usage line and in `--help` (`FILE`, `N`); string options only. */
  readonly value?: string;
  /** The accepted values; anything else is a usage error naming them. */
  readonly choices?: readonly string[];
  /** Refused when missing. */
  readonly required?: boolean;
  /** The option may be given several times; its value is then a list. */
  readonly multiple?: boolean;
  /** What the command uses when the option is absent, shown in `--help` (the command applies it). */
  readonly defaultText?: string;
  /** A one-letter alias (`-w`). */
  readonly short?: string;
}

export type CliOptions = Readonly<Record<string, CliOption>>;

/** The parsed values: a string (or list) per string option given, `true` per boolean given; absent ones are missing. */
export type CliValues<O extends CliOptions> = {
  [K in keyof O]?: O[K]['type'] extends 'boolean' ? boolean : O[K]['multiple'] extends true ? string[] : string;
};

/** Where a command writes; tests pass their own. */
export interface CliIo {
  stdout: { write(chunk: string): unknown };
  stderr: { write(chunk: string): unknown };
}

/** A {@link CliIo} that keeps what a command writes, for tests and for callers that run a command in-process. */
export function memoryIo(): { io: CliIo; out: () => string; err: () => string } {
  let out = '';
  let err = '';
  return {
    io: { stdout: { write: (s: string) => ((out += s), true) }, stderr: { write: (s: string) => ((err += s), true) } },
    out: () => out,
    err: () => err,
  };
}

/** A positional argument a command takes. */
export interface CliPositional {
  readonly name: string;
  readonly description: string;
  readonly required?: boolean;
}

/** A command that runs. */
export interface CliCommand<O extends CliOptions = CliOptions> {
  readonly kind: 'command';
  /** The full name as typed after `cribra` (`user add`). */
  readonly name: string;
  /** One line, for the list of commands. */
  readonly summary: string;
  /** Paragraphs printed under the usage line of `--help`. */
  readonly description?: string;
  readonly options: O;
  readonly positionals?: readonly CliPositional[];
  run(args: { values: CliValues<O>; positionals: string[] }, io: CliIo): Promise<number>;
}

/** A command with subcommands (`user add`, `user …`). */
export interface CliGroup {
  readonly kind: 'group';
  readonly name: string;
  readonly summary: string;
  readonly description?: string;
  readonly commands: readonly CliEntry[];
}

export type CliEntry = CliCommand | CliGroup;

/** Bad arguments: the message names the argument and what was expected. Exit code 2. */
export class UsageError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** Declares a command; the options table types the values its `run` receives. */
export function defineCommand<const O extends CliOptions>(command: Omit<CliCommand<O>, 'kind'>): CliCommand<O> {
  return { kind: 'command', ...command };
}

/** Declares a group of subcommands. */
export function defineGroup(group: Omit<CliGroup, 'kind'>): CliGroup {
  return { kind: 'group', ...group };
}

const HELP: CliOption = { type: 'boolean', short: 'h', description: 'show this help and exit' };

/** Help lines stay within a terminal's usual width. */
const WIDTH = 100;

/** Breaks a paragraph into lines of at most `width` characters (a longer word stands alone on its line). */
function wrap(text: string, width: number): string[] {
  const lines: string[] = [];
  let line = '';
  for (const word of text.split(/\s+/).filter(Boolean)) {
    if (line && line.length + 1 + word.length > width) {
      lines.push(line);
      line = word;
    } else line = line ? `${line} ${word}` : word;
  }
  if (line) lines.push(line);
  return lines;
}

function optionLabel(name: string, option: CliOption): string {
  const short = option.short ? `-${option.short}, ` : '';
  const value =
    option.type === 'string' ? ` ${option.value ?? (option.choices ? option.choices.join('|') : 'VALUE')}` : '';
  return `${short}--${name}${value}`;
}

/** The usage line of a command: required options first, then the optional ones in brackets. */
export function usageLine(command: CliCommand): string {
  const parts = [`cribra ${command.name}`];
  for (const [name, option] of Object.entries(command.options)) {
    const label = optionLabel(name, { ...option, short: undefined });
    parts.push(option.required ? label : `[${label}]`);
  }
  for (const p of command.positionals ?? []) parts.push(p.required ? p.name : `[${p.name}]`);
  return wrap(`usage: ${parts.join(' ')}`, WIDTH).join('\n    ');
}

function table(rows: Array<[string, string]>): string {
  const width = Math.min(32, Math.max(...rows.map(([left]) => left.length)) + 2);
  return rows
    .map(([left, right]) => {
      const [first = '', ...more] = wrap(right, WIDTH - 2 - width);
      const head =
        left.length + 2 > width ? `  ${left}\n  ${' '.repeat(width)}${first}` : `  ${left.padEnd(width)}${first}`;
      return [head, ...more.map((l) => `  ${' '.repeat(width)}${l}`)].join('\n');
    })
    .join('\n');
}

/** The text of `cribra <command> --help`. */
export function commandHelp(command: CliCommand): string {
  const rows: Array<[string, string]> = Object.entries({ ...command.options, help: HELP }).map(([name, option]) => {
    const notes: string[] = [];
    if (option.required) notes.push('required');
    if (option.choices && option.value) notes.push(`one of ${option.choices.join(', ')}`);
    if (option.defaultText !== undefined) notes.push(`default ${option.defaultText}`);
    if (option.multiple) notes.push('may be repeated');
    return [
      optionLabel(name, option),
      notes.length ? `${option.description} (${notes.join('; ')})` : option.description,
    ];
  });
  const sections = [usageLine(command), wrap(command.description ?? command.summary, WIDTH).join('\n')];
  if (command.positionals?.length)
    sections.push(`arguments:\n${table(command.positionals.map((p) => [p.name, p.description]))}`);
  sections.push(`options:\n${table(rows)}`);
  return `${sections.join('\n\n')}\n`;
}

/** The text of `cribra <group> --help`: its commands with their summaries. */
export function groupHelp(group: CliGroup, prefix = 'cribra'): string {
  const name = group.name ? `${prefix} ${group.name}` : prefix;
  const rows = group.commands.map((c): [string, string] => [c.name.split(' ').at(-1) ?? c.name, c.summary]);
  return [
    `usage: ${name} <command> [options]`,
    wrap(group.description ?? group.summary, WIDTH).join('\n'),
    `commands:\n${table(rows)}`,
    `\`${name} <command> --help\` describes a command and each of its options.`,
  ]
    .join('\n\n')
    .concat('\n');
}

function parseError(error: unknown, command: CliCommand): UsageError {
  const code = (error as { code?: string }).code;
  const message = (error as Error).message;
  const named = /--[A-Za-z0-9][A-Za-z0-9-]*/.exec(message)?.[0] ?? /'(-[^' ,]+)/.exec(message)?.[1];
  const known = Object.keys(command.options)
    .map((k) => `--${k}`)
    .join(', ');
  switch (code) {
    case 'ERR_PARSE_ARGS_UNKNOWN_OPTION':
      return new UsageError(`unknown option ${named ?? message} (known: ${known || 'none'}, --help)`);
    case 'ERR_PARSE_ARGS_INVALID_OPTION_VALUE':
      return new UsageError(
        /does not take an argument/.test(message)
          ? `${named ?? 'an option'} takes no value`
          : `${named ?? 'an option'} needs a value`,
      );
    case 'ERR_PARSE_ARGS_UNEXPECTED_POSITIONAL':
      return new UsageError(`unexpected argument ${/'([^']*)'/.exec(message)?.[1] ?? message}`);
    default:
      return new UsageError(message);
  }
}

/**
 * Parses `argv` for a command: strict (unknown options, missing values and stray arguments are errors), then
 * required options and choices. A string option given twice without `multiple` is an error rather than one
 * silently winning.
 */
export function parseCommandArgs<O extends CliOptions>(
  command: CliCommand<O>,
  argv: readonly string[],
): { values: CliValues<O> & { help?: boolean }; positionals: string[] } {
  const config: Record<string, { type: 'string' | 'boolean'; short?: string; multiple: true }> = {};
  for (const [name, option] of Object.entries({ ...command.options, help: HELP })) {
    // Every option is read as a list so that a repeated single option can be refused by name.
    config[name] = { type: option.type, multiple: true, ...(option.short ? { short: option.short } : {}) };
  }
  let parsed;
  try {
    parsed = parseArgs({
      args: [...argv],
      options: config,
      strict: true,
      allowPositionals: (command.positionals?.length ?? 0) > 0,
    });
  } catch (error) {
    throw parseError(error, command);
  }
  const raw = parsed.values as Record<string, Array<string | boolean> | undefined>;
  const values: Record<string, unknown> = {};
  if (raw.help) return { values: { help: true } as CliValues<O> & { help?: boolean }, positionals: [] };
  for (const [name, option] of Object.entries(command.options)) {
    const given = raw[name];
    if (given === undefined) {
      if (option.required) throw new UsageError(`--${name} is required`);
      continue;
    }
    if (!option.multiple && given.length > 1) throw new UsageError(`--${name} is given ${given.length} times`);
    if (option.choices)
      for (const v of given)
        if (!option.choices.includes(v as string))
          throw new UsageError(`--${name} ${JSON.stringify(v)}: expected one of ${option.choices.join(', ')}`);
    values[name] = option.multiple ? given : given[0];
  }
  const positionals = parsed.positionals;
  const expected = command.positionals ?? [];
  const missing = expected.filter((p, i) => p.required && i >= positionals.length);
  if (missing.length) throw new UsageError(`${missing.map((p) => p.name).join(' and ')} missing`);
  if (positionals.length > expected.length) throw new UsageError(`unexpected argument ${positionals[expected.length]}`);
  return { values: values as CliValues<O>, positionals };
}

/**
 * Runs a command or a group with its arguments: `--help` anywhere before a command's own arguments prints help
 * (exit 0); a usage error prints the message and the usage line on stderr (exit 2).
 */
export async function runEntry(entry: CliEntry, argv: readonly string[], io: CliIo): Promise<number> {
  if (entry.kind === 'group') {
    const sub = argv.at(0);
    const rest = argv.slice(1);
    if (sub === undefined || sub === '--help' || sub === '-h' || sub === 'help') {
      (sub === undefined ? io.stderr : io.stdout).write(groupHelp(entry));
      return sub === undefined ? 2 : 0;
    }
    const next = entry.commands.find((c) => c.name.split(' ').at(-1) === sub);
    if (!next) {
      io.stderr.write(`unknown command ${JSON.stringify(`${entry.name} ${sub}`.trim())}\n\n${groupHelp(entry)}`);
      return 2;
    }
    return runEntry(next, rest, io);
  }
  try {
    const { values, positionals } = parseCommandArgs(entry, argv);
    if (values.help) {
      io.stdout.write(commandHelp(entry));
      return 0;
    }
    return await entry.run({ values, positionals }, io);
  } catch (error) {
    if (error instanceof UsageError) {
      io.stderr.write(
        `${entry.name}: ${error.message}\n${usageLine(entry)}\n(\`cribra ${entry.name} --help\` for more)\n`,
      );
      return 2;
    }
    throw error;
  }
}

/** A number option's value, checked: finite, in range, whole when asked. */
export function numberOption(
  name: string,
  raw: string | undefined,
  fallback: number,
  rule: { min?: number; max?: number; integer?: boolean; exclusiveMin?: boolean; exclusiveMax?: boolean } = {},
): number {
  if (raw === undefined) return fallback;
  const n = Number(raw);
  const tooLow = rule.min !== undefined && (rule.exclusiveMin ? n <= rule.min : n < rule.min);
  const tooHigh = rule.max !== undefined && (rule.exclusiveMax ? n >= rule.max : n > rule.max);
  if (raw.trim() === '' || !Number.isFinite(n) || (rule.integer && !Number.isSafeInteger(n)) || tooLow || tooHigh) {
    const kind = rule.integer ? 'a whole number' : 'a number';
    const lo = rule.min === undefined ? '' : `${rule.exclusiveMin ? 'above' : 'from'} ${rule.min}`;
    const hi = rule.max === undefined ? '' : `${rule.exclusiveMax ? 'below' : 'to'} ${rule.max}`;
    const range =
      rule.exclusiveMin && rule.exclusiveMax
        ? `strictly between ${rule.min} and ${rule.max}`
        : [lo, hi].join(' ').trim();
    throw new UsageError(`--${name} ${JSON.stringify(raw)}: expected ${kind}${range ? ` ${range}` : ''}`);
  }
  return n;
}
