import { randomUUID } from 'node:crypto';
import { mkdirSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import type { Readable } from 'node:stream';
import {
  BadRequestException,
  Inject,
  Injectable,
  NotFoundException,
  UnsupportedMediaTypeException,
} from '@nestjs/common';
import { APP_CONFIG, type AppConfig } from '#config';
import { AuditService, type AuditActor } from '#audit';
import { Database, DeskEntity, ImportEntity } from '#database';
import { JOBS, JobQueueService } from '#queues';
import { receiveUpload, UploadError } from './upload.js';

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
  ): Promise<{ importId: string }> {
    if (!(await this.db.manager.findOneBy(DeskEntity, { id: deskId })))
      throw new NotFoundException(`no desk ${deskId}`);
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
      await this.db.write((m) => m.update(ImportEntity, { id }, { state: 'queued', bytesReceived: upload.bytes }));
      await this.jobs.add(JOBS.importFile, { importId: id });
      return { importId: id };
    } catch (e) {
      rmSync(path, { force: true });
      const message = e instanceof UploadError ? e.message : `upload interrupted: ${(e as Error).message}`;
      // `recorded` is set in the upload's callback, which the checker does not follow.
      // eslint-disable-next-line @typescript-eslint/no-unnecessary-condition -- set in a callback
      if (recorded)
        await this.db.write((m) =>
          m.update(ImportEntity, { id }, { state: 'failed', failure: message, finishedAt: new Date() }),
        );
      if (e instanceof UploadError)
        throw e.status === 415 ? new UnsupportedMediaTypeException(e.message) : new BadRequestException(e.message);
      throw e;
    }
  }

  async get(importId: string): Promise<ImportView> {
    const imp = await this.db.manager.findOneBy(ImportEntity, { id: importId });
    if (!imp) throw new NotFoundException(`no import ${importId}`);
    return toView(imp);
  }

  async listForDesk(deskId: number): Promise<ImportView[]> {
    const rows = await this.db.manager.find(ImportEntity, {
      where: { deskId },
      order: { createdAt: 'DESC' },
      take: 100,
    });
    return rows.map((r) => ({ ...toView(r), errors: r.errors.slice(0, 20) }));
  }
}

function toView(i: ImportEntity): ImportView {
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
    createdAt: i.createdAt,
    startedAt: i.startedAt,
    finishedAt: i.finishedAt,
  };
}
