/**
 * A small, strict flag parser: `--name value`, `--flag`, and `--name=value`; unknown flags are errors. A flag not
 * given is absent from the answer.
 */
export function parseFlags(
  argv: string[],
  spec: Partial<Record<string, 'string' | 'boolean'>>,
): Partial<Record<string, string | boolean>> {
  const out: Partial<Record<string, string | boolean>> = {};
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i];
    if (!arg.startsWith('--')) throw new Error(`unexpected argument ${JSON.stringify(arg)}`);
    const [name, inline] = arg.slice(2).split(/=(.*)/s, 2) as [string, string | undefined];
    const kind = spec[name];
    if (!kind)
      throw new Error(
        `unknown option --${name} (known: ${Object.keys(spec)
          .map((k) => `--${k}`)
          .join(', ')})`,
      );
    if (kind === 'boolean') {
      if (inline !== undefined) throw new Error(`--${name} takes no value`);
      out[name] = true;
    } else {
      const value = inline ?? argv.at(++i);
      if (value === undefined || (inline === undefined && value.startsWith('--')))
        throw new Error(`--${name} needs a value`);
      out[name] = value;
    }
  }
  return out;
}
