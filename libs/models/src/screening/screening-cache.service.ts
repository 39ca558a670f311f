import { Inject, Injectable } from '@nestjs/common';
import type { DeskEntity } from '#database';
import type { LoadedModel } from '../model-store.service.js';
import { PredictionsService } from '../predictions.service.js';
import { ScreeningRepository, type DecidedAt, type PeriodBasis, type RandomLabel } from './screening.repository.js';

/** A version's predictions grew after they were read: items imported after it were scored under it since. */
class ScoredSince extends Error {}

/**
 * The open pool of a desk as both screening reads need it, under one
 * version and one state of the database (its change marker).
 */
export interface PoolSnapshot {
  /** The version whose probabilities these are; null before a first model. */
  model: LoadedModel | null;
  open: number;
  /** Open items that match a seed term. */
  seedMatches: number;
  /** Open items the version scored: their probabilities, `k` per item in the model's order. */
  scored: { count: number; k: number; probs: Float64Array; postedAt: Float64Array; importedAt: Float64Array };
  /** Open items the version did not score (imported since, or every open item before a first model): their times. */
  unscored: { count: number; postedAt: Float64Array; importedAt: Float64Array };
  /** Items decided by a uniform random draw with a category (erased ones left out), with their label and text. */
  randoms: RandomLabel[];
  /** Every decided item with its times and label. */
  decided: DecidedAt[];
  /** The version's probabilities of items that have no stored prediction (decided ones), computed from their texts. */
  textProbabilities(ids: readonly number[]): Promise<Map<number, Float64Array>>;
  /**
   * A figure computed from this snapshot alone and `key` (which must name
   * everything else it depends on, such as the desk's settings), kept with
   * the snapshot: computed once while the snapshot is current.
   */
  memo<T>(key: string, compute: () => Promise<T>): Promise<T>;
  /** For each scored, unscored and decided item, the index of its period in `starts` (-1 when it has no such time). */
  periods(
    by: PeriodBasis,
    startOf: (t: Date) => string,
    key: string,
  ): {
    starts: string[];
    scored: Int32Array;
    unscored: Int32Array;
    decided: Int32Array;
  };
}

/** What one version scored, read once, and again only when it has scored items imported after it. */
interface VersionEntry {
  key: string;
  model: LoadedModel;
  /** Scored item ids in increasing order, and per item its probabilities and times. */
  ids: Float64Array;
  k: number;
  probs: Float64Array;
  postedAt: Float64Array;
  importedAt: Float64Array;
  /** Probabilities computed from the texts of decided random-draw items (texts never change; erased items are not asked for). */
  fromText: Map<number, Float64Array>;
  /** The snapshot of the last change marker seen under this version. */
  pool: { marker: string; snapshot: PoolSnapshot; bytes: number } | null;
  bytes: number;
}

/**
 * The memory all kept entries may take together, estimated from their typed
 * arrays and lists (8 bytes a number, 96 bytes a decided or random-draw item
 * plus its text): at 50 000 open items and three categories an entry takes
 * about 2.5 MB. An entry larger than this on its own is used for the call that
 * built it and not kept.
 */
export const SCREENING_CACHE_BYTES = 128 * 1024 * 1024;
/** Figures (answers under one set of settings or one period) kept with a snapshot at most. */
const MEMO_FIGURES = 16;
/** Desks kept at most (least recently used dropped first). */
export const SCREENING_CACHE_DESKS = 16;

/**
 * The one owner of the parsed per-item data behind `GET /screening` and
 * `GET /prevalence`: the stored probabilities and times of every item the
 * current version scored (parsed once per version), and the open pool,
 * random-draw labels and decided items as of the database's change marker
 * ({@link ScreeningRepository.changeMarker}). Every call reads the marker
 * first; a snapshot is served only when it was built under the same
 * version and marker, so a change made by any process (a verdict, an undo,
 * a settlement, an erasure, an import, a new version) is seen at the next
 * call, and nothing here needs telling. Settings (targets, watch,
 * confidence, score) are applied to the snapshot at each call, never cached.
 */
@Injectable()
export class ScreeningCache {
  /** By desk id, least recently used first. */
  private readonly entries = new Map<number, VersionEntry>();
  private readonly building = new Map<string, Promise<unknown>>();
  /** Zero turns keeping off (every call builds afresh): the reference the tests compare with. */
  budgetBytes = SCREENING_CACHE_BYTES;
  /** How often each part was read from the database (for the tests and the logs). */
  readonly reads = { versions: 0, pools: 0 };

  constructor(
    @Inject(PredictionsService) private readonly predictions: PredictionsService,
    @Inject(ScreeningRepository) private readonly repo: ScreeningRepository,
  ) {}

  /** Drops every kept entry. */
  clear(): void {
    this.entries.clear();
  }

  /** The desk's open pool under its current version, as of now. */
  async snapshot(desk: DeskEntity): Promise<PoolSnapshot> {
    // The marker first: a snapshot built after it is at least as new as it, never older.
    const { marker, open, seedMatches } = await this.repo.changeMarker(desk.id, desk.currentModelVersion);
    const model = await this.predictions.current(desk);
    let version = model ? await this.version(desk, model) : null;
    if (version?.pool?.marker === marker) return this.touch(desk.id, version).pool!.snapshot;
    let snapshot: PoolSnapshot;
    try {
      snapshot = await this.once(`${desk.id}:${model?.version ?? '-'}:${marker}`, () =>
        this.build(desk, model, version, open, seedMatches),
      );
    } catch (e) {
      if (!(e instanceof ScoredSince) || !model) throw e;
      // The version has scored items imported after it since its predictions were read (ScoringService.scoreNew):
      // read them again, once.
      if (this.entries.get(desk.id)?.key === `${desk.id}:${model.version}`) this.entries.delete(desk.id);
      const fresh = await this.version(desk, model);
      version = fresh;
      snapshot = await this.once(`${desk.id}:${model.version}:${marker}:again`, () =>
        this.build(desk, model, fresh, open, seedMatches),
      );
    }
    if (version) {
      const bytes = poolBytes(snapshot);
      version.pool = { marker, snapshot, bytes };
      this.keep(desk.id, version);
    }
    return snapshot;
  }

  private async version(desk: DeskEntity, model: LoadedModel): Promise<VersionEntry> {
    const key = `${desk.id}:${model.version}`;
    const kept = this.entries.get(desk.id);
    if (kept?.key === key) return kept;
    return this.once(key, async () => {
      this.reads.versions++;
      const k = model.categories.length;
      const ids = new Grow();
      const probs = new Grow();
      const postedAt = new Grow();
      const importedAt = new Grow();
      for await (const page of this.repo.scoredItems(desk.id, model.version)) {
        for (const r of page) {
          const p = JSON.parse(r.probabilities) as number[];
          if (p.length !== k) throw new RangeError(`item ${r.id}: ${p.length} probabilities for ${k} categories`);
          ids.push(r.id);
          for (let c = 0; c < k; c++) probs.push(p[c]);
          postedAt.push(r.postedAt);
          importedAt.push(r.importedAt);
        }
      }
      const entry: VersionEntry = {
        key,
        model,
        ids: ids.done(),
        k,
        probs: probs.done(),
        postedAt: postedAt.done(),
        importedAt: importedAt.done(),
        fromText: new Map(),
        pool: null,
        bytes: 0,
      };
      entry.bytes = (entry.ids.length + entry.probs.length + entry.postedAt.length + entry.importedAt.length) * 8;
      this.keep(desk.id, entry);
      return entry;
    });
  }

  private async build(
    desk: DeskEntity,
    model: LoadedModel | null,
    version: VersionEntry | null,
    open: number,
    seedMatches: number,
  ): Promise<PoolSnapshot> {
    this.reads.pools++;
    const k = version?.k ?? 0;
    const rows = new Grow();
    const unscoredPosted = new Grow();
    const unscoredImported = new Grow();
    let cursor = 0;
    for await (const page of this.repo.openItems(desk.id, model?.version ?? null)) {
      for (const o of page) {
        if (o.scored && version) {
          // Both lists are in id order: walk the version's ids forward.
          while (cursor < version.ids.length && version.ids[cursor] < o.id) cursor++;
          if (version.ids[cursor] !== o.id)
            throw new ScoredSince(`item ${o.id} has a prediction of version ${version.model.version} not read before`);
          rows.push(cursor);
        } else {
          unscoredPosted.push(o.postedAt);
          unscoredImported.push(o.importedAt);
        }
      }
    }
    const at = rows.done();
    const probs = new Float64Array(at.length * k);
    const postedAt = new Float64Array(at.length);
    const importedAt = new Float64Array(at.length);
    if (version)
      at.forEach((row, j) => {
        probs.set(version.probs.subarray(row * k, row * k + k), j * k);
        postedAt[j] = version.postedAt[row];
        importedAt[j] = version.importedAt[row];
      });
    const [randoms, decided] = [await this.repo.randomLabels(desk.id), await this.repo.decidedAt(desk.id)];
    const unscored = {
      count: unscoredPosted.length,
      postedAt: unscoredPosted.done(),
      importedAt: unscoredImported.done(),
    };
    const periodMemo = new Map<string, ReturnType<PoolSnapshot['periods']>>();
    const figures = new Map<string, Promise<unknown>>();
    return {
      model,
      open,
      seedMatches,
      scored: { count: at.length, k, probs, postedAt, importedAt },
      unscored,
      randoms,
      decided,
      textProbabilities: (ids) => this.fromText(version, ids),
      memo: <T>(key: string, compute: () => Promise<T>): Promise<T> => {
        let kept = figures.get(key) as Promise<T> | undefined;
        if (!kept) {
          // Settings come and go: keep the last few figures only.
          if (figures.size >= MEMO_FIGURES) figures.delete(figures.keys().next().value as string);
          kept = compute();
          figures.set(key, kept);
          kept.catch(() => figures.delete(key));
        }
        return kept;
      },
      periods: (by, startOf, key) => {
        const memoKey = `${by}:${key}`;
        let p = periodMemo.get(memoKey);
        if (!p) {
          const starts: string[] = [];
          const index = new Map<string, number>();
          // Most neighbouring items fall in the same period: remember the last day seen.
          let lastDay = Number.NaN;
          let lastIndex = -1;
          const of = (t: number) => {
            if (Number.isNaN(t)) return -1;
            const day = Math.floor(t / 86_400_000);
            if (day === lastDay) return lastIndex;
            const s = startOf(new Date(t));
            let i = index.get(s);
            if (i === undefined) {
              i = starts.length;
              starts.push(s);
              index.set(s, i);
            }
            lastDay = day;
            lastIndex = i;
            return i;
          };
          const pick = (posted: number, imported: number) => (by === 'posted' ? posted : imported);
          p = {
            starts,
            scored: Int32Array.from({ length: at.length }, (_, j) => of(pick(postedAt[j], importedAt[j]))),
            unscored: Int32Array.from({ length: unscored.count }, (_, j) =>
              of(pick(unscored.postedAt[j], unscored.importedAt[j])),
            ),
            decided: Int32Array.from(decided, (d) => of(pick(d.postedAt, d.importedAt))),
          };
          periodMemo.set(memoKey, p);
        }
        return p;
      },
    };
  }

  private async fromText(version: VersionEntry | null, ids: readonly number[]): Promise<Map<number, Float64Array>> {
    const out = new Map<number, Float64Array>();
    if (!version) return out;
    const missing = ids.filter((id) => !version.fromText.has(id));
    if (missing.length > 0) {
      const texts = await this.repo.texts(missing);
      for (const [id, text] of texts)
        version.fromText.set(id, version.model.classifier.predictProba(version.model.vectorize(text)));
    }
    for (const id of ids) {
      const p = version.fromText.get(id);
      if (p) out.set(id, p);
    }
    return out;
  }

  /** One build per key at a time: concurrent callers share it. */
  private once<T>(key: string, build: () => Promise<T>): Promise<T> {
    let pending = this.building.get(key) as Promise<T> | undefined;
    if (!pending) {
      pending = build().finally(() => this.building.delete(key));
      this.building.set(key, pending);
    }
    return pending;
  }

  private touch(deskId: number, entry: VersionEntry): VersionEntry {
    this.entries.delete(deskId);
    this.entries.set(deskId, entry);
    return entry;
  }

  /** Keeps a desk's entry (replacing its older version), then drops the least recently used beyond the bounds. */
  private keep(deskId: number, entry: VersionEntry): void {
    this.touch(deskId, entry);
    const size = (e: VersionEntry) => e.bytes + (e.pool?.bytes ?? 0) + e.fromText.size * (e.k * 8 + 96);
    let total = 0;
    for (const e of this.entries.values()) total += size(e);
    for (const [id, e] of this.entries) {
      if (total <= this.budgetBytes && this.entries.size <= SCREENING_CACHE_DESKS) break;
      this.entries.delete(id);
      total -= size(e);
    }
  }
}

/** The estimated size of a snapshot's own lists (the version's arrays are counted once, with the version). */
function poolBytes(s: PoolSnapshot): number {
  const texts = s.randoms.reduce((a, r) => a + r.text.length * 2, 0);
  return (
    (s.scored.probs.length + 2 * s.scored.count + 2 * s.unscored.count) * 8 +
    (s.randoms.length + s.decided.length) * 96 +
    texts
  );
}

/** A growing list of doubles, without holding a boxed array of the whole. */
class Grow {
  private data = new Float64Array(1024);
  length = 0;

  push(x: number): void {
    if (this.length === this.data.length) {
      const next = new Float64Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = x;
  }

  done(): Float64Array {
    return this.data.slice(0, this.length);
  }
}
