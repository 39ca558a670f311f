import { copyFileSync, existsSync, mkdirSync, mkdtempSync, renameSync, rmSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import BetterSqlite3 from 'better-sqlite3';
import { loadConfigOrExit } from '#config';
import { defineCommand } from '../cli-command.js';
import {
  BACKUP_FORMAT,
  BACKUP_FORMAT_VERSION,
  DATABASE_ENTRY,
  digestFile,
  filesUnder,
  writeArchive,
  type BackupManifest,
} from './archive.js';

/**
 * `backup --to FILE [--no-uploads]`: a consistent copy of the SQLite database (SQLite's online backup API, taken
 * while the service runs) and of the uploads folder, in one archive with a manifest and SHA-256 checksums.
 */
export const backupCommand = defineCommand({
  name: 'backup',
  summary: 'copy the database and the uploads into one archive, while the service runs (SQLite)',
  description:
    'Makes a consistent copy of the SQLite database with SQLite’s online backup API (the service keeps running and ' +
    'writing) and of DATA_DIR/uploads, and writes them into one tar archive with a manifest (the schema’s ' +
    'migrations, each file’s size and SHA-256). The archive is written next to FILE and renamed into place when ' +
    'complete, readable by its owner only. Prints one JSON line. For PostgreSQL, use pg_dump (see the README).',
  options: {
    to: { type: 'string', value: 'FILE', required: true, description: 'the archive to write (must not exist)' },
    'no-uploads': { type: 'boolean', description: 'leave out DATA_DIR/uploads (files of imports not yet read)' },
  },
  async run({ values }, io) {
    const config = loadConfigOrExit();
    if (config.database.kind !== 'sqlite') {
      io.stderr.write(
        'cribra backup copies the embedded SQLite database; with PostgreSQL, back up with pg_dump (see the README, ' +
          '"Backups and restore")\n',
      );
      return 2;
    }
    const source = config.database.file;
    if (!existsSync(source)) {
      io.stderr.write(`no database at ${source}: nothing to back up\n`);
      return 1;
    }
    const to = resolve(values.to as string);
    if (existsSync(to)) {
      io.stderr.write(`${to} exists; choose a new file name (a backup never overwrites one)\n`);
      return 2;
    }
    mkdirSync(dirname(to), { recursive: true });
    const work = mkdtempSync(join(dirname(to), '.cribra-backup-'));
    const partial = `${to}.partial`;
    try {
      const copy = join(work, DATABASE_ENTRY);
      const db = new BetterSqlite3(source, { fileMustExist: true, timeout: 15_000 });
      try {
        // After the first step, copy every remaining page in one step: a step reads under one read transaction, so
        // the copy is of one moment even while the service writes (a write between steps starts the copy again).
        await db.backup(copy, { progress: () => 1_000_000_000 });
      } finally {
        db.close();
      }
      const check = new BetterSqlite3(copy, { readonly: true });
      let migrations: string[];
      try {
        migrations = check.prepare('SELECT name FROM migrations ORDER BY id').pluck().all() as string[];
      } finally {
        check.close();
      }
      const sources = new Map<string, string>([[DATABASE_ENTRY, copy]]);
      if (values['no-uploads'] !== true) {
        // Uploads are copied first (an import's file is removed once it is read), then archived from the copies.
        const uploads = join(config.dataDir, 'uploads');
        for (const rel of filesUnder(uploads)) {
          const target = join(work, 'uploads', rel);
          mkdirSync(dirname(target), { recursive: true });
          try {
            copyFileSync(join(uploads, rel), target);
            sources.set(`uploads/${rel}`, target);
          } catch (e) {
            // Read and removed by a worker since it was listed: its import is done.
            if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw e;
          }
        }
      }
      const files = [];
      for (const [path, file] of sources) files.push({ path, ...(await digestFile(file)) });
      const manifest: BackupManifest = {
        format: BACKUP_FORMAT,
        formatVersion: BACKUP_FORMAT_VERSION,
        createdAt: new Date().toISOString(),
        database: 'sqlite',
        migrations,
        uploads: values['no-uploads'] !== true,
        files,
      };
      await writeArchive(partial, manifest, sources);
      renameSync(partial, to);
      io.stdout.write(
        `${JSON.stringify({
          to,
          bytes: statSync(to).size,
          schema: migrations.at(-1) ?? null,
          uploads: files.length - 1,
        })}\n`,
      );
      return 0;
    } finally {
      rmSync(partial, { force: true });
      rmSync(work, { recursive: true, force: true });
    }
  },
});
