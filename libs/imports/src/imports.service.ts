import { randomUUID } from 'node:crypto';
import { mkdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import type { Readable } from 'node:stream';
import { Inject, Injectable, UnsupportedMediaTypeException } from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { AuditService, type AuditActor } from '#audit';
import { In } from 'typeorm';
import { Database, DeskEntity, ImportEntity, UserEntity } from '#database';
import { JOBS, JobQueueService } from '#queues';
import { ArchiveAccountTaken, ensureArchiveAccount } from './archive-account.js';
import {
  findLabelField,
  LabelOptionsError,
  resolveLabelOptions,
  type LabelOptions,
  type LabelOptionsInput,
} from './label-options.js';
import { receiveUpload, UploadError } from './upload.js';
import { Conflict, InvalidInput, NotFound } from '#errors';

/** The one sentence an uploader states to import labels as random draws (recorded in the audit trail). */
export const UNIFORM_SAMPLE_STATEMENT =
  'The archive is a uniform random sample of the same stream, so its labels may calibrate the prediction sets.';

/** What `GET /api/imports/:importId` answers. */
export interface ImportView {
  id: string;
  deskId: number;
  format: ImportEntity['format'];
  fileName: string | null;
  state: ImportEntity['state'];
  bytesReceived: number;
  rowsRead: number;
  imported: number;
  duplicates: number;
  rejected: number;
  errors: ImportEntity['errors'];
  failure: string | null;
  labels: {
    field: string;
    draw: 'archive' | 'random';
    labelled: number;
    uniformSample: { statedBy: string; statedAt: Date } | null;
  } | null;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
}

export function uploadPath(config: AppConfig, importId: string): string {
  return join(config.dataDir, 'uploads', `${importId}.upload`);
}

/** The API side of imports: receives the file, records the import, enqueues the job. */
@Injectable()
export class ImportsService {
  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(JobQueueService) private readonly jobs: JobQueueService,
    @Inject(APP_CONFIG) private readonly config: AppConfig,
  ) {}

  async start(
    actor: AuditActor & { id: number },
    deskId: number,
    req: Readable & { headers: Record<string, string | string[] | undefined> },
    labelQuery: LabelOptionsInput = {},
  ): Promise<{ importId: string }> {
    if (!(await this.db.manager.findOneBy(DeskEntity, { id: deskId }))) throw new NotFound(`no desk ${deskId}`);
    // Options in the query are checked before a byte is stored; a form's fields can only be read with the file.
    try {
      resolveLabelOptions(labelQuery);
    } catch (e) {
      if (e instanceof LabelOptionsError) throw new InvalidInput(e.message);
      throw e;
    }
    const id = randomUUID();
    const path = uploadPath(this.config, id);
    mkdirSync(join(this.config.dataDir, 'uploads'), { recursive: true });
    let recorded = false;
    try {
      const upload = await receiveUpload(req, path, async (format, fileName) => {
        await this.db.write(async (m) => {
          await m.insert(ImportEntity, {
            id,
            deskId,
            format,
            fileName,
            state: 'receiving',
            bytesReceived: 0,
            rowsRead: 0,
            imported: 0,
            duplicates: 0,
            rejected: 0,
            errors: [],
            failure: null,
            rowsCommitted: 0,
            labelField: null,
            labelDraw: null,
            labelled: 0,
            uniformSampleBy: null,
            uniformSampleAt: null,
            createdBy: actor.id,
            createdAt: new Date(),
            startedAt: null,
            finishedAt: null,
          } as never);
          await this.audit.record(m, actor, {
            action: 'import.create',
            entityType: 'import',
            entityId: id,
            deskId,
            after: { format, fileName },
          });
        });
        recorded = true;
      });
      const labels = await this.checkLabels(labelQuery, upload.fields, upload.format, path);
      const now = new Date();
      await this.db.write(async (m) => {
        if (labels) await ensureArchiveAccount(this.db, m);
        await m.update(
          ImportEntity,
          { id },
          {
            state: 'queued',
            bytesReceived: upload.bytes,
            ...(labels
              ? {
                  labelField: labels.field,
                  labelDraw: labels.draw,
                  uniformSampleBy: labels.uniformSample ? actor.id : null,
                  uniformSampleAt: labels.uniformSample ? now : null,
                }
              : {}),
          },
        );
        if (labels?.uniformSample)
          await this.audit.record(m, actor, {
            action: 'import.uniform-sample',
            entityType: 'import',
            entityId: id,
            deskId,
            after: { labelField: labels.field, labelDraw: labels.draw, statement: UNIFORM_SAMPLE_STATEMENT },
          });
      });
      await this.jobs.add(JOBS.importFile, { importId: id });
      return { importId: id };
    } catch (e) {
      rmSync(path, { force: true });
      const message =
        e instanceof UploadError || e instanceof ArchiveAccountTaken
          ? e.message
          : `upload interrupted: ${(e as Error).message}`;
      // `recorded` is set in the upload's callback, which the checker does not follow.
      // eslint-disable-next-line @typescript-eslint/no-unnecessary-condition -- set in a callback
      if (recorded)
        await this.db.write((m) =>
          m.update(ImportEntity, { id }, { state: 'failed', failure: message, finishedAt: new Date() }),
        );
      if (e instanceof ArchiveAccountTaken) throw new Conflict(e.message);
      if (e instanceof UploadError)
        throw e.status === 415 ? new UnsupportedMediaTypeException(e.message) : new InvalidInput(e.message);
      throw e;
    }
  }

  /** The label options of a stored upload, its label column found in the file; an {@link UploadError} (400) if not. */
  private async checkLabels(
    query: LabelOptionsInput,
    fields: Record<string, string>,
    format: ImportEntity['format'],
    path: string,
  ): Promise<LabelOptions | null> {
    let labels: LabelOptions | null;
    try {
      labels = resolveLabelOptions(query, pickLabelFields(fields), format);
    } catch (e) {
      if (e instanceof LabelOptionsError) throw new UploadError(e.message);
      throw e;
    }
    if (!labels) return null;
    const seen = await findLabelField(path, format, labels.field, this.config.maxTextLength);
    if (seen && !seen.found) {
      const noun = format === 'csv' ? 'column' : 'key';
      throw new UploadError(
        `labelField '${labels.field}': no row of the file has a ${noun} '${labels.field}'` +
          (seen.names.length
            ? ` (the first row has ${seen.names.map((n) => `'${n}'`).join(', ')} besides the item fields)`
            : ''),
      );
    }
    return labels;
  }

  async get(importId: string): Promise<ImportView> {
    const imp = await this.db.manager.findOneBy(ImportEntity, { id: importId });
    if (!imp) throw new NotFound(`no import ${importId}`);
    return toView(imp, await this.userNames([imp]));
  }

  async listForDesk(deskId: number): Promise<ImportView[]> {
    const rows = await this.db.manager.find(ImportEntity, {
      where: { deskId },
      order: { createdAt: 'DESC' },
      take: 100,
    });
    const names = await this.userNames(rows);
    return rows.map((r) => ({ ...toView(r, names), errors: r.errors.slice(0, 20) }));
  }

  private async userNames(rows: ImportEntity[]): Promise<Map<number, string>> {
    const ids = [...new Set(rows.map((r) => r.uniformSampleBy).filter((x): x is number => x !== null))];
    const users = ids.length ? await this.db.manager.findBy(UserEntity, { id: In(ids) }) : [];
    return new Map(users.map((u) => [u.id, u.name]));
  }
}

function pickLabelFields(fields: Record<string, string>): LabelOptionsInput {
  const out: LabelOptionsInput = {};
  for (const name of ['labelField', 'labelDraw', 'uniformSample'] as const)
    if (Object.hasOwn(fields, name)) out[name] = fields[name];
  return out;
}

function toView(i: ImportEntity, names: Map<number, string>): ImportView {
  return {
    id: i.id,
    deskId: i.deskId,
    format: i.format,
    fileName: i.fileName,
    state: i.state,
    bytesReceived: i.bytesReceived,
    rowsRead: i.rowsRead,
    imported: i.imported,
    duplicates: i.duplicates,
    rejected: i.rejected,
    errors: i.errors,
    failure: i.failure,
    labels:
      i.labelField === null
        ? null
        : {
            field: i.labelField,
            draw: i.labelDraw ?? 'archive',
            labelled: i.labelled,
            uniformSample:
              i.uniformSampleBy !== null && i.uniformSampleAt !== null
                ? { statedBy: names.get(i.uniformSampleBy) ?? `user ${i.uniformSampleBy}`, statedAt: i.uniformSampleAt }
                : null,
          },
    createdAt: i.createdAt,
    startedAt: i.startedAt,
    finishedAt: i.finishedAt,
  };
}
