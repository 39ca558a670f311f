import { createHash } from 'node:crypto';
import { createReadStream, createWriteStream, existsSync, mkdirSync, readdirSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { pipeline } from 'node:stream/promises';
import * as tar from 'tar-stream';

/**
 * A Cribra backup is a POSIX tar file (readable with `tar -tf`) holding, in this order:
 *
 * 1. `manifest.json`: {@link BackupManifest}, with the SHA-256 and size of every other entry;
 * 2. `cribra.sqlite`: a consistent copy of the SQLite database (SQLite's online backup API);
 * 3. `uploads/…`: the files of `DATA_DIR/uploads`, unless the backup was made with `--no-uploads`.
 */
export const MANIFEST_NAME = 'manifest.json';
export const DATABASE_ENTRY = 'cribra.sqlite';
export const BACKUP_FORMAT = 'cribra-backup';
export const BACKUP_FORMAT_VERSION = 1;

export interface BackupEntry {
  /** Path inside the archive. */
  path: string;
  bytes: number;
  sha256: string;
}

export interface BackupManifest {
  format: typeof BACKUP_FORMAT;
  formatVersion: number;
  createdAt: string;
  database: 'sqlite';
  /** Names of the migrations the copied database had run, in order: the schema it holds. */
  migrations: string[];
  uploads: boolean;
  files: BackupEntry[];
}

/** SHA-256 (hex) and size of a file. */
export async function digestFile(path: string): Promise<{ sha256: string; bytes: number }> {
  const hash = createHash('sha256');
  let bytes = 0;
  for await (const chunk of createReadStream(path) as AsyncIterable<Buffer>) {
    hash.update(chunk);
    bytes += chunk.length;
  }
  return { sha256: hash.digest('hex'), bytes };
}

/** Every regular file under `dir`, as paths relative to it (sorted, `/`-separated). */
export function filesUnder(dir: string, prefix = ''): string[] {
  if (!existsSync(dir)) return [];
  const out: string[] = [];
  for (const e of readdirSync(dir, { withFileTypes: true }).sort((a, b) => a.name.localeCompare(b.name))) {
    const rel = prefix ? `${prefix}/${e.name}` : e.name;
    if (e.isDirectory()) out.push(...filesUnder(join(dir, e.name), rel));
    else if (e.isFile()) out.push(rel);
  }
  return out;
}

/**
 * Writes the archive: the manifest, then each file from `sources` (archive path → file on disk). The sizes and
 * checksums in the manifest must be those of the files as they are now; the files must not change while written.
 */
export async function writeArchive(to: string, manifest: BackupManifest, sources: Map<string, string>): Promise<void> {
  const pack = tar.pack();
  const written = pipeline(pack, createWriteStream(to, { mode: 0o600 }));
  const add = (header: tar.Headers, from: string | Buffer) =>
    new Promise<void>((resolve, reject) => {
      if (Buffer.isBuffer(from)) {
        pack.entry(header, from, (err) => (err ? reject(err) : resolve()));
        return;
      }
      const entry = pack.entry(header, (err) => (err ? reject(err) : resolve()));
      createReadStream(from).on('error', reject).pipe(entry);
    });
  const mtime = new Date(manifest.createdAt);
  await add({ name: MANIFEST_NAME, mode: 0o600, mtime }, Buffer.from(`${JSON.stringify(manifest, null, 2)}\n`));
  for (const f of manifest.files) {
    const from = sources.get(f.path);
    if (!from) throw new Error(`no source for ${f.path}`);
    // The size in the header must be exact: a file that changed since it was measured fails here, not in a restore.
    if (statSync(from).size !== f.bytes) throw new Error(`${f.path} changed while the backup was written`);
    await add({ name: f.path, size: f.bytes, mode: 0o600, mtime }, from);
  }
  pack.finalize();
  await written;
}

/** Raised when an archive is not a Cribra backup or does not match its manifest. */
export class BadArchiveError extends Error {}

/**
 * Reads an archive into `dir`: checks that it starts with a Cribra manifest, writes each entry the manifest lists
 * (and nothing else) under `dir`, and checks its size and SHA-256. Answers the manifest. Nothing outside `dir` is
 * touched; on any error the caller removes `dir`.
 */
export async function extractArchive(from: string, dir: string): Promise<BackupManifest> {
  // Set in the entry callback, which the checker does not follow: a holder object keeps it honest.
  const read: { manifest: BackupManifest | null } = { manifest: null };
  const seen = new Set<string>();
  const extract = tar.extract();
  extract.on('entry', (header, stream, next) => {
    const fail = (message: string) => {
      stream.resume();
      next(new BadArchiveError(message));
    };
    const manifest = read.manifest;
    if (manifest === null) {
      if (header.name !== MANIFEST_NAME) {
        fail(`not a Cribra backup: the first entry is not ${MANIFEST_NAME}`);
        return;
      }
      const chunks: Buffer[] = [];
      stream.on('data', (c: Buffer) => chunks.push(c));
      stream.on('end', () => {
        try {
          read.manifest = parseManifest(Buffer.concat(chunks).toString('utf8'));
          next();
        } catch (e) {
          next(e as Error);
        }
      });
      return;
    }
    const entry = manifest.files.find((f) => f.path === header.name);
    if (!entry || seen.has(entry.path)) {
      fail(`unexpected entry ${JSON.stringify(header.name)} in the archive`);
      return;
    }
    seen.add(entry.path);
    const target = join(dir, entry.path);
    mkdirSync(dirname(target), { recursive: true });
    const hash = createHash('sha256');
    let bytes = 0;
    stream.on('data', (c: Buffer) => {
      hash.update(c);
      bytes += c.length;
    });
    pipeline(stream, createWriteStream(target, { mode: 0o600 })).then(() => {
      if (bytes !== entry.bytes || hash.digest('hex') !== entry.sha256)
        next(new BadArchiveError(`${entry.path}: its checksum does not match the manifest (the archive is damaged)`));
      else next();
    }, next);
  });
  await pipeline(createReadStream(from), extract);
  const manifest = read.manifest;
  if (manifest === null) throw new BadArchiveError('not a Cribra backup: the archive is empty');
  const missing = manifest.files.filter((f) => !seen.has(f.path));
  if (missing.length) throw new BadArchiveError(`the archive lacks ${missing.map((f) => f.path).join(', ')}`);
  return manifest;
}

function parseManifest(text: string): BackupManifest {
  const m = JSON.parse(text) as Partial<BackupManifest>;
  if (m.format !== BACKUP_FORMAT) throw new BadArchiveError('not a Cribra backup: unknown manifest format');
  if (m.formatVersion !== BACKUP_FORMAT_VERSION)
    throw new BadArchiveError(`backup format version ${String(m.formatVersion)} is not one this version reads`);
  if (!Array.isArray(m.files) || !Array.isArray(m.migrations) || m.database !== 'sqlite')
    throw new BadArchiveError('the manifest is incomplete');
  for (const f of m.files)
    if (
      typeof f.path !== 'string' ||
      !(f.path === DATABASE_ENTRY || /^uploads\/[A-Za-z0-9._-]+(\/[A-Za-z0-9._-]+)*$/.test(f.path)) ||
      f.path.split('/').includes('..')
    )
      throw new BadArchiveError(`the manifest names a file it may not: ${JSON.stringify(f.path)}`);
  return m as BackupManifest;
}
