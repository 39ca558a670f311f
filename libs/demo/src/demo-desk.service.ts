import { Inject, Injectable } from '@nestjs/common';
import { Database, DeskDirectory, type DbInt } from '#database';
import {
  DEMO_POOL_SEED,
  DEMO_POOL_SIZE,
  generateMossbankPool,
  MOSSBANK_CATEGORIES,
  type MossbankCategory,
  type MossbankPost,
} from './pool/index.js';

/** Whether the simulated reviewer can work a desk, and if not, why. */
export interface DemoAvailability {
  available: boolean;
  reason?: string;
}

/**
 * Knows the generated Mossbank pool: its hidden categories (regenerated from
 * the seed, never read from the database) and whether a desk holds nothing but
 * generated posts, which is what the simulated reviewer needs to answer.
 */
@Injectable()
export class DemoDeskService {
  private pool: Map<string, MossbankPost> | null = null;

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(DeskDirectory) private readonly directory: DeskDirectory,
  ) {}

  /** The generated posts by external id (generated once per process, about 0.1 s). */
  posts(): Map<string, MossbankPost> {
    this.pool ??= new Map(
      generateMossbankPool({ seed: DEMO_POOL_SEED, count: DEMO_POOL_SIZE }).map((p) => [p.externalId, p]),
    );
    return this.pool;
  }

  /** The hidden true category of a generated post, or null when the id is not one. */
  truth(externalId: string | null): MossbankCategory | null {
    return externalId === null ? null : (this.posts().get(externalId)?.category ?? null);
  }

  /**
   * A desk qualifies when it has the demo's categories and every one of its
   * items is a generated post: same external id and the same text.
   */
  async availability(deskId: number): Promise<DemoAvailability> {
    const entry = await this.directory.get(deskId);
    if (!entry) return { available: false, reason: `no desk ${deskId}` };
    const names = entry.categories.map((c) => c.name);
    const missing = MOSSBANK_CATEGORIES.filter((c) => !names.includes(c));
    if (missing.length)
      return {
        available: false,
        reason: `the simulated reviewer answers ${MOSSBANK_CATEGORIES.join(', ')}; this desk has no category ${missing.join(', ')}`,
      };
    // Aggregates answer one row; SUM is null over no rows.
    const [counts] = await this.db.query<{ n: DbInt; other: DbInt | null }>(
      null,
      `SELECT COUNT(*) AS n, SUM(CASE WHEN external_id LIKE 'mossbank-%' THEN 0 ELSE 1 END) AS other FROM items WHERE desk_id = $1 AND erased_at IS NULL`,
      [deskId],
    );
    const n = Number(counts.n);
    if (n === 0) return { available: false, reason: 'the desk has no items yet (an import may still be running)' };
    const notGenerated = (k: number) => ({
      available: false,
      reason: `the desk holds ${k} item(s) that are not generated demo posts: the simulated reviewer answers from the generator's hidden categories, so it only works on a desk of generated posts`,
    });
    if (Number(counts.other ?? 0) > 0) return notGenerated(Number(counts.other));
    const posts = this.posts();
    const rows = await this.db.query<{ external_id: string; text: string }>(
      null,
      // Tombstones hold no text and are never served: only the items that still do must be generated posts.
      'SELECT external_id, text FROM items WHERE desk_id = $1 AND erased_at IS NULL',
      [deskId],
    );
    const differ = rows.filter((r) => posts.get(r.external_id)?.text !== r.text).length;
    return differ > 0 ? notGenerated(differ) : { available: true };
  }
}
