import { createReadStream, existsSync, rmSync } from 'node:fs';
import { Inject, Injectable, Logger } from '@nestjs/common';
import type { EntityManager } from 'typeorm';
import { APP_CONFIG, type AppConfig } from '#config';
import { AuditService } from '#audit';
import {
  CategoryEntity,
  Database,
  DeskEntity,
  ImportEntity,
  UserEntity,
  type DbInt,
  type ImportRowError,
} from '#database';
import { compileSeedTerms, type SeedTermMatcher } from '#learning';
import { DeskFeaturesService, RetrainScheduler } from '#models';
import { JOBS, JobQueueService } from '#queues';
import { ImportFileError, parseImport, type ImportRecord, type RejectedRow } from './parsing/index.js';
import { uploadPath } from './imports.service.js';
import { ArchiveAccountTaken, ensureArchiveAccount } from './archive-account.js';
import { takeLabel } from './label-options.js';
import { Conflict, Gone, InvalidInput, NotFound } from '#errors';

/** What a batch's labelled rows need: the archive account, the desk's categories by name, the import's draw. */
interface LabelContext {
  field: string;
  draw: 'archive' | 'random';
  account: { id: number; name: string };
  categoryIds: Map<string, number>;
  importedBy: string;
}

/** A parsed row and its label, if it has one. */
type LabelledRecord = ImportRecord & { label: string | null };

const MAX_STORED_ERRORS = 1000;
const ITEM_COLUMNS = [
  'desk_id',
  'import_id',
  'external_id',
  'source',
  'text',
  'normalized_text',
  'normalized_hash',
  'meta',
  'posted_at',
  'imported_at',
  'state',
  'seed_hits',
  'priority',
  'rand_key',
] as const;

/**
 * The worker side of imports: reads the uploaded file row by row and writes
 * items in batches. Each batch and the import's counters commit in one
 * transaction, so a crash leaves whole batches and counters that say what
 * landed; a retried job resumes after the last committed row.
 */
@Injectable()
export class ImportRunner {
  private readonly logger = new Logger('ImportRunner');

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(RetrainScheduler) private readonly retrain: RetrainScheduler,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(AuditService) private readonly audit: AuditService,
  ) {}

  async run(
    importId: string,
    reportProgress: (rowsRead: number) => Promise<void> = () => Promise.resolve(),
  ): Promise<ImportEntity> {
    const imp = await this.db.manager.findOneBy(ImportEntity, { id: importId });
    if (!imp) throw new NotFound(`no import ${importId}`);
    if (imp.state === 'done' || imp.state === 'failed') return imp;
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: imp.deskId });
    if (!desk) throw new Gone(`desk ${imp.deskId} of import ${importId} is gone`);
    const path = uploadPath(this.config, importId);
    if (!existsSync(path)) {
      await this.fail(importId, 'the uploaded file is missing from the data folder');
      throw new Gone(`upload of import ${importId} is missing`);
    }
    await this.db.write((m) =>
      m.update(
        ImportEntity,
        { id: importId },
        { state: 'running', ...(imp.startedAt ? {} : { startedAt: new Date() }) },
      ),
    );
    const matcher = compileSeedTerms(desk.seedTerms);
    const labels = await this.labelContext(imp).catch(async (e: unknown) => {
      if (!(e instanceof ArchiveAccountTaken)) throw e;
      await this.fail(importId, `${e.message}; nothing was imported`);
      this.discard(path);
      throw new Conflict(e.message);
    });
    const resumeAfter = imp.rowsCommitted;
    const open = () =>
      parseImport(createReadStream(path, { highWaterMark: 256 * 1024 }), imp.format, {
        maxTextLength: this.config.maxTextLength,
      });
    // A JSON array or a CSV file can turn out broken after its first rows (cut short, a quote never closed). Such a
    // file is refused whole: a first pass reads it to the end without writing, so none of its rows land. NDJSON
    // lines stand alone (a bad line is a rejected row), so it needs no such pass.
    if (resumeAfter === 0 && imp.format !== 'ndjson') {
      try {
        const rows = open();
        let step = await rows.next();
        while (!step.done) step = await rows.next();
      } catch (e) {
        if (!(e instanceof ImportFileError)) throw e;
        await this.fail(importId, `row ${e.row}: ${e.message}; nothing was imported`);
        this.discard(path);
        throw new InvalidInput(e.message);
      }
    }
    let records: LabelledRecord[] = [];
    let rejected: RejectedRow[] = [];
    let lastRow = resumeAfter;
    const flush = async () => {
      if (records.length === 0 && rejected.length === 0) return;
      const batch = records;
      const bad = rejected;
      const upTo = lastRow;
      records = [];
      rejected = [];
      await this.db.write(async (m) => {
        const { inserted, labelled } = batch.length
          ? await this.insertItems(m, desk.id, importId, batch, matcher, labels)
          : { inserted: 0, labelled: 0 };
        const cur = (await m.findOneBy(ImportEntity, { id: importId }))!;
        const room = Math.max(0, MAX_STORED_ERRORS - cur.errors.length);
        const errors: ImportRowError[] = room > 0 ? [...cur.errors, ...bad.slice(0, room)] : cur.errors;
        await m.update(
          ImportEntity,
          { id: importId },
          {
            rowsRead: cur.rowsRead + batch.length + bad.length,
            imported: cur.imported + inserted,
            duplicates: cur.duplicates + batch.length - inserted,
            rejected: cur.rejected + bad.length,
            labelled: cur.labelled + labelled,
            errors: errors,
            rowsCommitted: upTo,
          },
        );
      });
      await reportProgress(upTo);
    };

    try {
      for await (const row of open()) {
        const n = row.ok ? row.record.row : row.rejected.row;
        if (n <= resumeAfter) continue;
        lastRow = n;
        if (!row.ok) rejected.push(row.rejected);
        else if (!labels) records.push({ ...row.record, label: null });
        else {
          // A row whose label is not a category is rejected whole: neither an open item nor a decided one.
          const taken = takeLabel(row.record.meta, labels.field, [...labels.categoryIds.keys()]);
          if ('reason' in taken) rejected.push({ row: n, reason: taken.reason });
          else records.push({ ...row.record, label: taken.category });
        }
        if (records.length + rejected.length >= this.config.importBatchSize) await flush();
      }
      await flush();
    } catch (e) {
      if (e instanceof ImportFileError) {
        // Only when the file changed on disk after the first pass: say exactly what stayed, the rows before it.
        await flush().catch(() => undefined);
        const kept = (await this.db.manager.findOneBy(ImportEntity, { id: importId }))!.rowsCommitted;
        await this.fail(
          importId,
          `row ${e.row}: ${e.message}; ` +
            (kept ? `rows 1 to ${kept} were imported before it and stay` : 'nothing was imported'),
        );
        this.discard(path);
        throw new InvalidInput(e.message);
      }
      throw e;
    }
    await this.db.write((m) => m.update(ImportEntity, { id: importId }, { state: 'done', finishedAt: new Date() }));
    // Fresh planner statistics: without them the queue's lease queries can choose a full sort of the pool
    // (autovacuum may be off or late; SQLite has no automatic statistics at all).
    await this.db.query(null, 'ANALYZE items');
    // New items need scoring: with a model, the current version scores them at once; new verdicts may also bring a
    // retrain (and a desk started from another desk's model retrains on its imports).
    await this.jobs
      .add(JOBS.scoreNewItems, { deskId: imp.deskId, cause: `import-${importId}` })
      .catch((e: unknown) => this.logger.warn(`scoring request after import failed: ${(e as Error).message}`));
    await this.retrain
      .check(imp.deskId, 'import')
      .catch((e: unknown) => this.logger.warn(`retrain request after import failed: ${(e as Error).message}`));
    // New words for the seed-term suggestions: one count for a burst of imports.
    await this.jobs
      .add(JOBS.countTerms, { deskId: imp.deskId }, { delay: this.config.termsAfterSeconds * 1000 })
      .catch((e: unknown) => this.logger.warn(`term count request after import failed: ${(e as Error).message}`));
    this.discard(path);
    const done = (await this.db.manager.findOneBy(ImportEntity, { id: importId }))!;
    this.logger.log(
      `import ${importId}: ${done.imported} imported, ${done.duplicates} duplicates, ${done.rejected} rejected of ${done.rowsRead} rows`,
    );
    return done;
  }

  /** An upload holds the same texts as the items: it goes once its import has finished, unless KEEP_UPLOADS is on. */
  private discard(path: string): void {
    if (!this.config.keepUploads) rmSync(path, { force: true });
  }

  private async fail(importId: string, failure: string): Promise<void> {
    await this.db.write((m) =>
      m.update(ImportEntity, { id: importId }, { state: 'failed', failure, finishedAt: new Date() }),
    );
  }

  /** The label column's context, or null for an import without one. */
  private async labelContext(imp: ImportEntity): Promise<LabelContext | null> {
    if (imp.labelField === null) return null;
    // Made when the import was stored (the upload's transaction); an import queued before that still gets it here.
    const account = await this.db.write((m) => ensureArchiveAccount(this.db, m));
    const categories = await this.db.manager.find(CategoryEntity, {
      where: { deskId: imp.deskId },
      order: { position: 'ASC' },
    });
    const uploader = await this.db.manager.findOneBy(UserEntity, { id: imp.createdBy });
    return {
      field: imp.labelField,
      draw: imp.labelDraw ?? 'archive',
      account: { id: account.id, name: account.name },
      categoryIds: new Map(categories.map((c) => [c.name, c.id])),
      importedBy: uploader?.name ?? `user ${imp.createdBy}`,
    };
  }

  /**
   * Inserts a batch; rows that collide with an existing external id or text are skipped and counted as duplicates
   * (a duplicate's label is not applied: the item already in the pool keeps its state). A labelled row is inserted
   * decided, with its verdict by the archive account and that verdict's audit event, in the batch's transaction.
   */
  private async insertItems(
    m: EntityManager,
    deskId: number,
    importId: string,
    batch: LabelledRecord[],
    matcher: SeedTermMatcher,
    labels: LabelContext | null,
  ): Promise<{ inserted: number; labelled: number }> {
    const now = this.db.time(new Date());
    const params: unknown[] = [];
    const tuples: string[] = [];
    for (const r of batch) {
      const hits = matcher.count(r.text);
      const values = [
        deskId,
        importId,
        r.externalId,
        r.source,
        r.text,
        r.normalizedText,
        r.textHash,
        JSON.stringify(r.meta),
        r.createdAt ? this.db.time(r.createdAt) : null,
        now,
        r.label === null ? 'open' : 'decided',
        hits,
        hits,
        Math.random(),
      ];
      tuples.push(
        `(${values
          .map((v) => {
            params.push(v);
            return `$${params.length}`;
          })
          .join(', ')})`,
      );
    }
    const rows = await this.db.query<{ id: DbInt; normalized_hash: string }>(
      m,
      `INSERT INTO items (${ITEM_COLUMNS.join(', ')}) VALUES ${tuples.join(', ')} ON CONFLICT DO NOTHING RETURNING id, normalized_hash`,
      params,
    );
    // The pool's document frequencies grow with exactly the items that landed; their term counts are kept for scoring.
    const landed = new Map(rows.map((r) => [r.normalized_hash, Number(r.id)]));
    const added: Array<{ id: number; text: string }> = [];
    const decided: Array<{ itemId: number; row: number; category: string }> = [];
    for (const r of batch) {
      const id = landed.get(r.textHash);
      if (id === undefined) continue;
      landed.delete(r.textHash);
      added.push({ id, text: r.text });
      if (r.label !== null) decided.push({ itemId: id, row: r.row, category: r.label });
    }
    await this.features.addItems(m, deskId, added);
    if (labels && decided.length) await this.insertArchiveVerdicts(m, deskId, importId, decided, labels);
    return { inserted: rows.length, labelled: decided.length };
  }

  /**
   * The verdicts of an archive's labelled rows: by the system account, no lease and no model shown, draw `archive`
   * (trains, never calibrates) or `random` (the uploader stated a uniform sample), client id `import:<id>:<row>`,
   * each with its `verdict.create` audit event naming the import, the row and who imported it. A verdict row is part
   * of these items' insertion (they are never open), so it is written here rather than through a lease's verdict.
   */
  private async insertArchiveVerdicts(
    m: EntityManager,
    deskId: number,
    importId: string,
    decided: Array<{ itemId: number; row: number; category: string }>,
    labels: LabelContext,
  ): Promise<void> {
    const now = this.db.time(new Date());
    const params: unknown[] = [];
    const tuples: string[] = [];
    for (const d of decided) {
      const values = [
        deskId,
        d.itemId,
        labels.account.id,
        `import:${importId}:${d.row}`,
        labels.categoryIds.get(d.category),
        false,
        labels.draw,
        false,
        now,
      ];
      tuples.push(
        `(${values
          .map((v) => {
            params.push(v);
            return `$${params.length}`;
          })
          .join(', ')})`,
      );
    }
    const ins = await this.db.query<{ id: DbInt; item_id: DbInt }>(
      m,
      `INSERT INTO verdicts (desk_id, item_id, reviewer_id, client_id, category_id, abstain, draw, simulated, created_at)
       VALUES ${tuples.join(', ')} RETURNING id, item_id`,
      params,
    );
    const byItem = new Map(decided.map((d) => [d.itemId, d]));
    for (const v of ins) {
      const d = byItem.get(Number(v.item_id))!;
      await this.audit.record(m, labels.account, {
        action: 'verdict.create',
        entityType: 'verdict',
        entityId: Number(v.id),
        deskId,
        after: {
          itemId: d.itemId,
          category: d.category,
          abstain: false,
          draw: labels.draw,
          importId,
          row: d.row,
          importedBy: labels.importedBy,
        },
      });
    }
  }
}
