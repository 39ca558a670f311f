/** A small, strict flag parser: `--name value`, `--flag`, and `--name=value`; unknown flags are errors. */
export function parseFlags(argv: string[], spec: Record<string, 'string' | 'boolean'>): Record<string, string | boolean> {
  const out: Record<string, string | boolean> = {};
  for (let i = 0; i < argv.length; i++) {
    const arg = argv[i]!;
    if (!arg.startsWith('--')) throw new Error(`unexpected argument ${JSON.stringify(arg)}`);
    const [name, inline] = arg.slice(2).split(/=(.*)/s, 2) as [string, string | undefined];
    const kind = spec[name];
    if (!kind) throw new Error(`unknown option --${name} (known: ${Object.keys(spec).map((k) => `--${k}`).join(', ')})`);
    if (kind === 'boolean') {
      if (inline !== undefined) throw new Error(`--${name} takes no value`);
      out[name] = true;
    } else {
      const value = inline ?? argv[++i];
      if (value === undefined || (inline === undefined && value.startsWith('--'))) throw new Error(`--${name} needs a value`);
      out[name] = value;
    }
  }
  return out;
}
