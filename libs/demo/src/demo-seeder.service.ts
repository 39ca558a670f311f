import { randomBytes } from 'node:crypto';
import { Readable } from 'node:stream';
import { Inject, Injectable } from '@nestjs/common';
import { AuthService, MembershipService } from '#auth';
import { APP_CONFIG, type AppConfig } from '#config';
import { Database, type DbInt, type MemberRole } from '#database';
import { DesksService } from '#desks';
import { ImportsService } from '#imports';
import {
  DEMO_POOL_SEED,
  DEMO_POOL_SIZE,
  generateMossbankPool,
  MOSSBANK_CATEGORIES,
  MOSSBANK_SEED_TERMS,
  mossbankNdjson,
} from './pool/index.js';

export const DEMO_DESK_NAME = 'Mossbank Commons';

/** The demo accounts, one per role; each name is its role, so nobody has to guess. */
export const DEMO_ACCOUNTS: ReadonlyArray<{ name: string; role: MemberRole }> = [
  { name: 'supervisor', role: 'supervisor' },
  { name: 'reviewer', role: 'reviewer' },
  { name: 'auditor', role: 'auditor' },
];

/** What seeding made: shown once on the console. */
export interface DemoSeedResult {
  deskId: number;
  importId: string;
  posts: number;
  accounts: Array<{ name: string; role: MemberRole; password: string }>;
}

/**
 * Creates the Mossbank Commons demo on an empty service: the desk, one
 * account per role with a random password, and the import of the generated
 * posts through the ordinary import path (the worker's import job does the rest).
 */
@Injectable()
export class DemoSeeder {
  constructor(
    @Inject(APP_CONFIG) private readonly config: AppConfig,
    @Inject(Database) private readonly db: Database,
    @Inject(AuthService) private readonly auth: AuthService,
    @Inject(DesksService) private readonly desks: DesksService,
    @Inject(ImportsService) private readonly imports: ImportsService,
    @Inject(MembershipService) private readonly members: MembershipService,
  ) {}

  /** Seeds when DEMO is on and the database has neither users nor desks; otherwise does nothing and returns null. */
  async seedIfEmpty(): Promise<DemoSeedResult | null> {
    if (!this.config.demo) return null;
    const [row] = await this.db.query<{ users: DbInt; desks: DbInt }>(
      null,
      'SELECT (SELECT COUNT(*) FROM users) AS users, (SELECT COUNT(*) FROM desks) AS desks',
    );
    if (Number(row.users) > 0 || Number(row.desks) > 0) return null;

    const accounts: DemoSeedResult['accounts'] = [];
    const ids = new Map<string, number>();
    for (const a of DEMO_ACCOUNTS) {
      // 120 random bits, written in 20 URL-safe characters.
      const password = randomBytes(15).toString('base64url');
      const { user } = await this.auth.createUser({ id: null, name: 'demo' }, { name: a.name, role: a.role, password });
      ids.set(a.name, user.id);
      accounts.push({ ...a, password });
    }
    // The desk and the import are made on behalf of the demo supervisor, as the audit trail says.
    const supervisor = { id: ids.get('supervisor')!, name: 'supervisor' };
    const desk = await this.desks.create(supervisor, {
      name: DEMO_DESK_NAME,
      categories: [...MOSSBANK_CATEGORIES],
      seedTerms: Object.fromEntries(Object.entries(MOSSBANK_SEED_TERMS).map(([c, terms]) => [c, [...terms]])),
    });
    // The supervisor became a member by creating the desk; the others join with their account's role.
    await this.db.write(async (m) => {
      for (const a of DEMO_ACCOUNTS)
        if (a.role !== 'supervisor') await this.members.enrol(m, supervisor, desk.id, ids.get(a.name)!, a.role);
    });
    const posts = generateMossbankPool({ seed: DEMO_POOL_SEED, count: DEMO_POOL_SIZE });
    const body = Object.assign(Readable.from([Buffer.from(mossbankNdjson(posts), 'utf8')]), {
      headers: { 'content-type': 'application/x-ndjson' },
    });
    const { importId } = await this.imports.start(supervisor, desk.id, body);
    return { deskId: desk.id, importId, posts: posts.length, accounts };
  }
}

/** The console block `start` prints once after seeding: where to go and how to sign in. */
export function formatDemoBlock(url: string, seeded: DemoSeedResult): string {
  const width = Math.max(...seeded.accounts.map((a) => a.name.length));
  return [
    '',
    `  Demo desk "${DEMO_DESK_NAME}" created: ${seeded.posts} invented forum posts are being imported.`,
    `  Open ${url} and sign in as one of:`,
    '',
    ...seeded.accounts.map((a) => `    ${a.name.padEnd(width)}  password: ${a.password}`),
    '',
    '  These passwords are shown only this once. Start with DEMO=off to begin without the demo.',
    '',
  ].join('\n');
}
