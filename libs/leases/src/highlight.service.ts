import { Injectable } from '@nestjs/common';
import { compileSeedTerms, type SeedTermMatcher } from '#learning';
import type { DeskEntity } from '#database';

export interface Highlight {
  start: number;
  end: number;
  category: string;
}

/** Seed-term highlights of an item's text; keeps one compiled matcher per desk and settings version. */
@Injectable()
export class HighlightService {
  private readonly cache = new Map<number, { stamp: string; matcher: SeedTermMatcher }>();

  highlights(desk: Pick<DeskEntity, 'id' | 'seedTerms'>, text: string): Highlight[] {
    const stamp = JSON.stringify(desk.seedTerms);
    let entry = this.cache.get(desk.id);
    if (!entry || entry.stamp !== stamp) {
      entry = { stamp, matcher: compileSeedTerms(desk.seedTerms) };
      this.cache.set(desk.id, entry);
    }
    return entry.matcher.match(text).map((m) => ({ start: m.start, end: m.end, category: m.category }));
  }
}
