/**
 * Controllers and job processors never reach the database themselves: they call services, and SQL lives in the
 * repositories (and the services not yet moved behind one). The check reads the sources, so a new controller or
 * processor that injects `Database` fails here with its file named.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const ROOT = join(import.meta.dirname, '..', '..');

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const path = join(dir, e.name);
    if (e.isDirectory()) return e.name === 'node_modules' ? [] : sources(path);
    return /\.(controller|processor)\.ts$/.test(e.name) ? [path] : [];
  });
}

describe('who owns the SQL', () => {
  const files = [...sources(join(ROOT, 'apps')), ...sources(join(ROOT, 'libs'))];

  it('finds the controllers and processors', () => {
    // Every lib with routes has one, and the worker has its processors.
    expect(files.filter((f) => f.endsWith('.controller.ts')).length).toBeGreaterThanOrEqual(15);
    expect(files.filter((f) => f.endsWith('.processor.ts')).length).toBeGreaterThanOrEqual(2);
  });

  it('no controller or processor imports the Database or runs SQL', () => {
    const offenders = files.filter((f) => {
      const text = readFileSync(f, 'utf8');
      return /import\s*{[^}]*\bDatabase\b[^}]*}\s*from\s*'#database'/.test(text) || /\.query(<[^>]*>)?\(/.test(text);
    });
    expect(offenders.map((f) => f.slice(ROOT.length + 1))).toEqual([]);
  });
});
