import { DataSource, type DataSourceOptions } from 'typeorm';
import type { DatabaseConfig } from '#config';
import type { Dialect } from './dialect.js';
import { withMigrationLock } from './migration-lock.js';
import { auditEventSchema } from './entities/audit-event.entity.js';
import { categorySchema } from './entities/category.entity.js';
import { credentialSchema } from './entities/credential.entity.js';
import { deskSchema } from './entities/desk.entity.js';
import { importSchema } from './entities/import.entity.js';
import { itemSchema } from './entities/item.entity.js';
import { leaseSchema } from './entities/lease.entity.js';
import { userSchema } from './entities/user.entity.js';
import { verdictSchema } from './entities/verdict.entity.js';
import { modelVersionSchema } from './entities/model-version.entity.js';
import { modelReportSchema } from './entities/model-report.entity.js';
import { deskMemberSchema } from './entities/desk-member.entity.js';
import { erasureSchema } from './entities/erasure.entity.js';
import { escalationSchema } from './entities/escalation.entity.js';
import { Foundation1764600000000 } from './migrations/1764600000000-foundation.js';
import { LearningLoop1764700000000 } from './migrations/1764700000000-learning-loop.js';
import { Agreement1764800000000 } from './migrations/1764800000000-agreement.js';
import { ModelReports1764900000000 } from './migrations/1764900000000-model-reports.js';
import { TrailIndex1765000000000 } from './migrations/1765000000000-trail-index.js';
import { TermCounts1765100000000 } from './migrations/1765100000000-term-counts.js';
import { TokenExpiry1766200000000 } from './migrations/1766200000000-token-expiry.js';
import { DeskMembers1766210000000 } from './migrations/1766210000000-desk-members.js';
import { ScreeningSettings1766400000000 } from './migrations/1766400000000-screening-settings.js';
import { ScreenLane1766410000000 } from './migrations/1766410000000-screen-lane.js';
import { Escalations1766420000000 } from './migrations/1766420000000-escalations.js';
import { TermSuggestions1766500000000 } from './migrations/1766500000000-term-suggestions.js';
import { KeywordCounts1766510000000 } from './migrations/1766510000000-keyword-counts.js';
import { Erasure1766700000000 } from './migrations/1766700000000-erasure.js';
import { Retention1766700000001 } from './migrations/1766700000001-retention.js';
import { LabelledArchives1766800000000 } from './migrations/1766800000000-labelled-archives.js';
import { QueueComfort1766810000000 } from './migrations/1766810000000-queue-comfort.js';
import { ScreeningMarker1766820000000 } from './migrations/1766820000000-screening-marker.js';
import { MarkerScored1766830000000 } from './migrations/1766830000000-marker-scored.js';

/** Every entity, listed explicitly. */
export function entitySchemas(dialect: Dialect) {
  return [
    userSchema,
    credentialSchema,
    deskSchema,
    categorySchema,
    importSchema,
    itemSchema,
    leaseSchema,
    verdictSchema,
    auditEventSchema,
    modelVersionSchema,
    modelReportSchema,
    deskMemberSchema,
    erasureSchema,
    escalationSchema,
  ].map((f) => f(dialect));
}

/** Every migration, in order. */
export const MIGRATIONS = [
  Foundation1764600000000,
  LearningLoop1764700000000,
  Agreement1764800000000,
  ModelReports1764900000000,
  TrailIndex1765000000000,
  TermCounts1765100000000,
  TokenExpiry1766200000000,
  DeskMembers1766210000000,
  ScreeningSettings1766400000000,
  ScreenLane1766410000000,
  Escalations1766420000000,
  TermSuggestions1766500000000,
  KeywordCounts1766510000000,
  Erasure1766700000000,
  Retention1766700000001,
  LabelledArchives1766800000000,
  QueueComfort1766810000000,
  ScreeningMarker1766820000000,
  MarkerScored1766830000000,
];

/** Builds (does not connect) the TypeORM data source for a database configuration. */
export function createDataSource(db: DatabaseConfig, options: { poolSize?: number } = {}): DataSource {
  const common = {
    entities: entitySchemas(db.kind),
    migrations: MIGRATIONS,
    synchronize: false,
    migrationsRun: false,
    logging: false,
  } as const;
  const opts: DataSourceOptions =
    db.kind === 'postgres'
      ? { ...common, type: 'postgres', url: db.url, extra: { max: options.poolSize ?? 20 } }
      : {
          ...common,
          type: 'better-sqlite3',
          database: db.file,
          enableWAL: true,
          // Several processes (API, workers) share the file: wait for a lock rather than fail at once.
          timeout: 15_000,
          prepareDatabase: (conn: { pragma: (s: string) => unknown }) => {
            conn.pragma('synchronous = NORMAL');
            // Deleted and overwritten content is zeroed, so an erased text leaves no bytes behind in the file.
            conn.pragma('secure_delete = ON');
          },
        };
  return new DataSource(opts);
}

/**
 * Connects and brings the schema up to date, under the migration lock ({@link withMigrationLock}): of several
 * processes opening the database at once, one runs the pending migrations and the others wait. `onWait` hears when
 * this one has to wait (default: a line on stderr).
 */
export async function openDatabase(
  db: DatabaseConfig,
  options: { poolSize?: number; migrate?: boolean; onWait?: (message: string) => void } = {},
): Promise<DataSource> {
  const ds = createDataSource(db, options);
  await ds.initialize();
  if (options.migrate !== false)
    await withMigrationLock(
      ds,
      () => ds.runMigrations({ transaction: 'each' }),
      options.onWait ?? ((message) => process.stderr.write(`${message}\n`)),
    );
  return ds;
}
