import { existsSync, mkdirSync, mkdtempSync, readFileSync, renameSync, rmSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { loadConfigOrExit, type AppConfig } from '#config';
import { MIGRATIONS } from '#database';
import { defineCommand } from '../cli-command.js';
import { BadArchiveError, DATABASE_ENTRY, extractArchive } from './archive.js';

/** What says the service is running on this data folder: a live process of the launcher's, or an API answering. */
async function runningService(config: AppConfig): Promise<string | null> {
  const state = join(config.dataDir, 'launcher.json');
  if (existsSync(state)) {
    const s = JSON.parse(readFileSync(state, 'utf8')) as {
      launcherPid?: number;
      processes?: Record<string, { pid: number | null }>;
    };
    const pids: Array<[string, number | null | undefined]> = [
      ['launcher', s.launcherPid],
      ...Object.entries(s.processes ?? {}).map(([name, p]): [string, number | null] => [name, p.pid]),
    ];
    for (const [name, pid] of pids) {
      if (!pid) continue;
      try {
        process.kill(pid, 0);
        return `its ${name} runs as process ${pid} (${state})`;
      } catch (e) {
        // EPERM: the process exists but belongs to someone else.
        if ((e as NodeJS.ErrnoException).code === 'EPERM') return `its ${name} runs as process ${pid} (${state})`;
      }
    }
  }
  try {
    const res = await fetch(`http://${config.host}:${config.port}/healthz`, { signal: AbortSignal.timeout(1000) });
    if (res.ok) return `an API answers on http://${config.host}:${config.port}/`;
  } catch {
    /* nothing listens: not running */
  }
  return null;
}

/**
 * `restore --from FILE [--replace]`: puts a backup made by `cribra backup` in place of the SQLite database and adds
 * its uploads, with the service stopped.
 */
export const restoreCommand = defineCommand({
  name: 'restore',
  summary: 'put a backup in place (SQLite; the service must be stopped)',
  description:
    'Checks the archive (manifest, every checksum) and puts its database at the configured SQLite file and its ' +
    'uploads in DATA_DIR/uploads. Refuses while the service runs on this data folder, and refuses an archive whose ' +
    'schema is newer than this version (upgrade first); an older one is migrated at the next start. An existing ' +
    'database is refused unless --replace, which keeps it beside as <file>.before-restore-<time>. Prints one JSON line.',
  options: {
    from: { type: 'string', value: 'FILE', required: true, description: 'the archive written by cribra backup' },
    replace: { type: 'boolean', description: 'set an existing database aside instead of refusing' },
  },
  async run({ values }, io) {
    const config = loadConfigOrExit();
    if (config.database.kind !== 'sqlite') {
      io.stderr.write('cribra restore restores the embedded SQLite database; with PostgreSQL use pg_restore\n');
      return 2;
    }
    const from = resolve(values.from as string);
    if (!existsSync(from)) {
      io.stderr.write(`no archive at ${from}\n`);
      return 2;
    }
    const running = await runningService(config);
    if (running) {
      io.stderr.write(`the service is running: ${running}; stop it before restoring\n`);
      return 1;
    }
    const target = config.database.file;
    if (existsSync(target) && values.replace !== true) {
      io.stderr.write(`${target} exists; restore into an empty data folder, or pass --replace to set it aside\n`);
      return 1;
    }
    mkdirSync(dirname(target), { recursive: true });
    mkdirSync(config.dataDir, { recursive: true });
    const work = mkdtempSync(join(dirname(target), '.cribra-restore-'));
    try {
      let manifest;
      try {
        manifest = await extractArchive(from, work);
      } catch (e) {
        if (!(e instanceof BadArchiveError) && !(e instanceof SyntaxError)) throw e;
        io.stderr.write(`${from}: ${e.message}\n`);
        return 1;
      }
      const known = new Set(MIGRATIONS.map((m) => m.name));
      const newer = manifest.migrations.filter((n) => !known.has(n));
      if (newer.length) {
        io.stderr.write(
          `${from} holds a schema newer than this version of Cribra (migrations ${newer.join(', ')} are unknown ` +
            'here); restore it with that version or a later one\n',
        );
        return 1;
      }
      if (existsSync(target)) {
        const aside = `${target}.before-restore-${new Date().toISOString().replace(/[:.]/g, '-')}`;
        renameSync(target, aside);
        for (const ext of ['-wal', '-shm']) if (existsSync(target + ext)) renameSync(target + ext, aside + ext);
        io.stderr.write(`the database that was there is now ${aside}\n`);
      }
      for (const ext of ['-wal', '-shm']) rmSync(target + ext, { force: true });
      renameSync(join(work, DATABASE_ENTRY), target);
      const uploads = manifest.files.filter((f) => f.path.startsWith('uploads/'));
      for (const f of uploads) {
        const dest = join(config.dataDir, f.path);
        mkdirSync(dirname(dest), { recursive: true });
        renameSync(join(work, f.path), dest);
      }
      io.stdout.write(
        `${JSON.stringify({
          from,
          database: target,
          createdAt: manifest.createdAt,
          schema: manifest.migrations.at(-1) ?? null,
          uploads: uploads.length,
        })}\n`,
      );
      return 0;
    } finally {
      rmSync(work, { recursive: true, force: true });
    }
  },
});
