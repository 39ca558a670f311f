import { Inject, Injectable } from '@nestjs/common';
import { Database } from './database.js';
import { CategoryEntity } from './entities/category.entity.js';
import { DeskEntity } from './entities/desk.entity.js';

export interface DeskEntry {
  desk: DeskEntity;
  categories: CategoryEntity[];
}

/** How long a desk's settings are reused within one process before they are read again. */
export const DESK_CACHE_MS = 2000;

/**
 * Desks and their categories as the hot paths (leases, verdicts) need them,
 * read at most every {@link DESK_CACHE_MS} per desk. A change made through
 * this process is seen at once; one made by another process within that time.
 */
@Injectable()
export class DeskDirectory {
  private readonly cache = new Map<number, { entry: DeskEntry | null; until: number }>();

  constructor(@Inject(Database) private readonly db: Database) {}

  async get(deskId: number): Promise<DeskEntry | null> {
    const now = Date.now();
    const hit = this.cache.get(deskId);
    if (hit && hit.until > now) return hit.entry;
    const desk = await this.db.manager.findOneBy(DeskEntity, { id: deskId });
    const entry = desk
      ? {
          desk,
          categories: await this.db.manager.find(CategoryEntity, { where: { deskId }, order: { position: 'ASC' } }),
        }
      : null;
    this.cache.set(deskId, { entry, until: now + DESK_CACHE_MS });
    return entry;
  }

  forget(deskId: number): void {
    this.cache.delete(deskId);
  }
}
