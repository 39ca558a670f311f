import { Inject, Injectable } from '@nestjs/common';
import { AuditService, type AuditActor } from '#audit';
import { Database } from '#database';
import { DesksService, type DeskView } from '#desks';
import { compileSeedTerms, rankBySimilarity } from '#learning';
import { DeskFeaturesService, ModelStore } from '#models';
import { termLeanings } from './term-leaning.js';
import { EXAMPLES_PER_WORD, decodeTermStatistics, type TermStatistics } from './term-statistics.codec.js';
import { TermStatisticsRepository } from './term-statistics.repository.js';
import { seedTermKey } from './term-statistics.service.js';
import { InvalidInput } from '#errors';

/** Words held by fewer items are not suggested. */
export const MIN_SUGGESTION_ITEMS = 3;
/** Snippets per suggestion, and characters of context on each side of the term. */
const SNIPPETS = EXAMPLES_PER_WORD;
const CONTEXT_CHARS = 40;
const LETTER = /\p{L}/u;
const SINGLE_CHARACTER = /^.$/u;
const KEEP = 4;

export interface Snippet {
  itemId: number;
  text: string;
  start: number;
  end: number;
}

export interface TermSuggestion {
  term: string;
  similarity: number | null;
  count: number;
  leaning: number | null;
  towardsCategory: boolean | null;
  snippets: Snippet[];
}

export interface TermSuggestions {
  category: string;
  computedAt: Date | null;
  itemsCounted: number;
  vocabularySize: number;
  modelVersion: number | null;
  seedTerms: string[];
  seedTermsNotCounted: string[];
  similar: TermSuggestion[];
  fromModel: TermSuggestion[];
}

interface Loaded {
  computedAt: Date;
  itemsCounted: number;
  statistics: TermStatistics;
  index: Map<string, number>;
  /** The version whose leanings `statistics` holds (the count job's, or a newer one computed here). */
  modelVersion: number | null;
}

/** Reads the stored statistics to suggest seed terms; accepts and dismisses suggestions. */
@Injectable()
export class TermSuggestionsService {
  private readonly cache = new Map<number, Loaded>();

  constructor(
    @Inject(Database) private readonly db: Database,
    @Inject(TermStatisticsRepository) private readonly repository: TermStatisticsRepository,
    @Inject(DesksService) private readonly desks: DesksService,
    @Inject(DeskFeaturesService) private readonly features: DeskFeaturesService,
    @Inject(AuditService) private readonly audit: AuditService,
    @Inject(ModelStore) private readonly models: ModelStore,
  ) {}

  async suggestions(deskId: number, categoryName: string, limit: number): Promise<TermSuggestions> {
    const desk = await this.desks.get(deskId);
    const category = this.category(desk, categoryName);
    const seedTerms = desk.seedTerms[category.name] ?? [];
    const loaded = await this.load(deskId);
    const empty: TermSuggestions = {
      category: category.name,
      computedAt: null,
      itemsCounted: 0,
      vocabularySize: 0,
      modelVersion: null,
      seedTerms,
      seedTermsNotCounted: seedTerms,
      similar: [],
      fromModel: [],
    };
    if (!loaded) return empty;
    await this.refreshLeanings(deskId, loaded, desk.currentModelVersion);
    const { statistics: s, index } = loaded;
    const featurizer = this.features.featurizer();
    const allSeeds = new Set(
      Object.values(desk.seedTerms)
        .flat()
        .map((t) => seedTermKey(featurizer, t)),
    );
    // A word that is a form of a seed term ending in `*` is that term already.
    const stems = [...allSeeds].filter((k) => k.endsWith('*') && !k.includes(' ')).map((k) => k.slice(0, -1));
    const seedRows = seedTerms.map((t) => index.get(seedTermKey(featurizer, t)) ?? -1);
    const dismissed = await this.repository.dismissed(deskId, category.id);
    const candidate = (w: number) => {
      const word = s.words[w];
      return (
        s.documents[w] >= MIN_SUGGESTION_ITEMS &&
        LETTER.test(word) &&
        !SINGLE_CHARACTER.test(word) &&
        !allSeeds.has(word) &&
        !stems.some((stem) => word.startsWith(stem)) &&
        !dismissed.has(word)
      );
    };
    const similar = rankBySimilarity(
      s.ppmi,
      seedRows.filter((r) => r >= 0),
      { limit, exclude: (w) => !candidate(w) },
    );
    const k = s.leaningCategories.length;
    const c = s.leaningCategories.indexOf(category.name);
    const leaning = (w: number) => (c >= 0 ? s.leanings[w * k + c] : null);
    const fromModel: number[] = [];
    if (c >= 0) {
      const order: number[] = [];
      for (let w = 0; w < s.words.length; w++) if (leaning(w)! > 0 && candidate(w)) order.push(w);
      order.sort((a, b) => leaning(b)! - leaning(a)! || a - b);
      fromModel.push(...order.slice(0, limit));
    }
    const rows = [...similar.map((r) => r.row), ...fromModel];
    const snippets = await this.snippets(deskId, s, rows);
    const describe = (w: number, similarity: number | null): TermSuggestion => {
      const l = leaning(w);
      return {
        term: s.words[w],
        similarity,
        count: s.documents[w],
        leaning: l,
        towardsCategory: l === null ? null : l > 0,
        snippets: snippets.get(w) ?? [],
      };
    };
    return {
      ...empty,
      computedAt: loaded.computedAt,
      itemsCounted: loaded.itemsCounted,
      vocabularySize: s.words.length,
      modelVersion: c >= 0 ? loaded.modelVersion : null,
      seedTermsNotCounted: seedTerms.filter((_, i) => seedRows[i] < 0),
      similar: similar.map((r) => describe(r.row, r.similarity)),
      fromModel: fromModel.map((w) => describe(w, null)),
    };
  }

  /** Adds a term to a category's seed terms (audited as a change of the desk's settings). */
  async accept(actor: AuditActor, deskId: number, categoryName: string, term: string) {
    const desk = await this.desks.get(deskId);
    const category = this.category(desk, categoryName);
    const before = desk.seedTerms[category.name] ?? [];
    if (before.includes(term))
      return { category: category.name, term, decision: 'accepted' as const, changed: false, seedTerms: before };
    const updated = await this.desks.update(actor, deskId, {
      seedTerms: { ...desk.seedTerms, [category.name]: [...before, term] },
    });
    return {
      category: category.name,
      term,
      decision: 'accepted' as const,
      changed: true,
      seedTerms: updated.seedTerms[category.name] ?? [],
    };
  }

  /** Remembers that a term is not to be suggested for a category again (audited). */
  async dismiss(actor: AuditActor & { id: number }, deskId: number, categoryName: string, term: string) {
    const desk = await this.desks.get(deskId);
    const category = this.category(desk, categoryName);
    const changed = await this.db.write(async (m) => {
      const inserted = await this.repository.dismiss(m, {
        deskId,
        categoryId: category.id,
        term,
        userId: actor.id,
        at: new Date(),
      });
      if (inserted)
        await this.audit.record(m, actor, {
          action: 'term-suggestion.dismiss',
          entityType: 'desk',
          entityId: deskId,
          deskId,
          after: { category: category.name, term },
        });
      return inserted;
    });
    return {
      category: category.name,
      term,
      decision: 'dismissed' as const,
      changed,
      seedTerms: desk.seedTerms[category.name] ?? [],
    };
  }

  /**
   * The count job stored the leanings of the version current when it ran; a
   * version published since is read here once (one probability per word) and
   * kept with the cached statistics.
   */
  private async refreshLeanings(deskId: number, loaded: Loaded, current: number | null): Promise<void> {
    if (current === null || current === loaded.modelVersion) return;
    const model = await this.models.load(deskId, current);
    if (!model) return;
    loaded.statistics = {
      ...loaded.statistics,
      leaningCategories: model.categories,
      leanings: termLeanings(model, loaded.statistics.words),
    };
    loaded.modelVersion = current;
  }

  private category(desk: DeskView, name: string): { id: number; name: string } {
    const found = desk.categories.find((c) => c.name === name);
    if (!found)
      throw new InvalidInput(
        `category: ${JSON.stringify(name)} is not a category of this desk (${desk.categories.map((c) => c.name).join(', ')})`,
      );
    return found;
  }

  /** The stored statistics, decoded once per computation. */
  private async load(deskId: number): Promise<Loaded | undefined> {
    const computedAt = await this.repository.computedAt(deskId);
    if (!computedAt) return undefined;
    const hit = this.cache.get(deskId);
    if (hit && hit.computedAt.getTime() === computedAt.getTime()) return hit;
    const row = await this.repository.load(deskId);
    if (!row) return undefined;
    const statistics = decodeTermStatistics(row.data);
    const loaded: Loaded = {
      computedAt: row.computedAt,
      itemsCounted: row.itemsCounted,
      modelVersion: row.modelVersion,
      statistics,
      index: new Map(statistics.words.map((w, i) => [w, i])),
    };
    this.cache.delete(deskId);
    this.cache.set(deskId, loaded);
    while (this.cache.size > KEEP) this.cache.delete(this.cache.keys().next().value as number);
    return loaded;
  }

  /** Passages around each word in its example items, the term's place marked by offsets. */
  private async snippets(deskId: number, s: TermStatistics, rows: readonly number[]): Promise<Map<number, Snippet[]>> {
    const ids = new Set<number>();
    for (const w of rows)
      for (let j = 0; j < SNIPPETS; j++) {
        const id = s.examples[w * EXAMPLES_PER_WORD + j];
        if (id > 0) ids.add(id);
      }
    const texts = await this.repository.texts(deskId, [...ids]);
    const out = new Map<number, Snippet[]>();
    for (const w of rows) {
      if (out.has(w)) continue;
      const matcher = compileSeedTerms({ term: [s.words[w]] });
      const list: Snippet[] = [];
      for (let j = 0; j < SNIPPETS; j++) {
        const id = s.examples[w * EXAMPLES_PER_WORD + j];
        const text = id > 0 ? texts.get(id) : undefined;
        if (text === undefined) continue;
        const hit = matcher.match(text).at(0);
        if (!hit) continue;
        const from = Math.max(0, hit.start - CONTEXT_CHARS);
        const to = Math.min(text.length, hit.end + CONTEXT_CHARS);
        list.push({ itemId: id, text: text.slice(from, to), start: hit.start - from, end: hit.end - from });
      }
      out.set(w, list);
    }
    return out;
  }
}
