import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';

const script = fileURLToPath(new URL('../../scripts/ensure-built.js', import.meta.url));

/**
 * `npm start` runs scripts/ensure-built.js first: it builds only when dist/ is missing or older than a source file,
 * and says so. Tried on a small checkout whose build counts its runs.
 */
describe('build once, run many', () => {
  const root = mkdtempSync(join(tmpdir(), 'cribra-build-'));
  afterAll(() => rmSync(root, { recursive: true, force: true }));
  mkdirSync(join(root, 'apps', 'api', 'src'), { recursive: true });
  mkdirSync(join(root, 'dist'));
  writeFileSync(join(root, 'apps', 'api', 'src', 'main.ts'), 'export {};\n');
  writeFileSync(
    join(root, 'build.js'),
    `const fs = require('node:fs');
     fs.appendFileSync('runs', 'x');
     if (process.env.FAIL_BUILD) process.exit(4);
     require('node:child_process').execFileSync(process.execPath, [${JSON.stringify(script)}, '--mark', '--root', '.']);`,
  );
  writeFileSync(join(root, 'package.json'), JSON.stringify({ name: 'b', scripts: { build: 'node build.js' } }));
  const ensure = (env: Record<string, string> = {}) =>
    spawnSync(process.execPath, [script, '--root', root], {
      env: { PATH: process.env.PATH ?? '', ...env },
      encoding: 'utf8',
      timeout: 60_000,
    });
  const runs = () => readFileSync(join(root, 'runs'), 'utf8').length;

  it('builds when dist/ was never built, then not again until a source changes', () => {
    const first = ensure();
    expect(first.status).toBe(0);
    expect(first.stderr).toMatch(/Building first \(dist\/ is missing or was never finished\)/);
    expect(first.stdout).toBe('');
    expect(runs()).toBe(1);

    const second = ensure();
    expect(second.status).toBe(0);
    expect(second.stderr).toBe('');
    expect(runs()).toBe(1);

    const later = new Date(Date.now() + 5_000);
    utimesSync(join(root, 'apps', 'api', 'src', 'main.ts'), later, later);
    const third = ensure();
    expect(third.stderr).toMatch(/Building first \(apps\/api\/src\/main\.ts changed since\)/);
    expect(runs()).toBe(2);
  });

  it('stops with the build’s exit code and says why when the build fails', () => {
    const later = new Date(Date.now() + 10_000);
    utimesSync(join(root, 'package.json'), later, later);
    const failed = ensure({ FAIL_BUILD: '1' });
    expect(failed.status).toBe(4);
    expect(failed.stderr).toMatch(/The build failed/);
  });
});
