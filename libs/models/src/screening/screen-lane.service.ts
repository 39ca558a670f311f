import { Inject, Injectable } from '@nestjs/common';
import type { DeskEntity } from '#database';
import { byPriority, predictionSetRule, screenPriority } from '#learning';
import { PredictionsService } from '../predictions.service.js';
import { setOptionsOf } from '../set-options.js';

/** The order of a desk's review lane under one version and one set of settings. */
interface Lane {
  key: string;
  /** Flagged items scored by the version, highest probability of a watched category first. */
  ids: number[];
}

/** Lanes kept in memory (one per desk; a desk's entry is replaced when its version or settings change). */
const MAX_LANES = 32;

/**
 * The review lane of a desk: the open items the current version flags (their
 * prediction set holds a watched category), highest probability of a watched
 * category first. Sets are read from the stored probabilities and the
 * desk's settings, as everywhere else, so the lane follows a change of
 * target or of watched categories at once. The order is computed once per
 * version and settings and kept; which of its items are still open is asked
 * of the database at each lease, so several API processes can share a desk.
 */
@Injectable()
export class ScreenLaneService {
  private readonly lanes = new Map<number, Lane>();
  private readonly building = new Map<string, Promise<Lane>>();

  constructor(@Inject(PredictionsService) private readonly predictions: PredictionsService) {}

  /**
   * The lane's item ids in serving order, or null when the desk has no
   * version or watches no category (the lane is closed). Items decided or
   * leased since are still listed: the caller claims the first open one.
   */
  async order(desk: DeskEntity): Promise<number[] | null> {
    if (desk.currentModelVersion === null || desk.watch.length === 0) return null;
    const key = laneKey(desk);
    const kept = this.lanes.get(desk.id);
    if (kept?.key === key) return kept.ids;
    let pending = this.building.get(key);
    if (!pending) {
      pending = this.build(desk, key).finally(() => this.building.delete(key));
      this.building.set(key, pending);
    }
    const lane = await pending;
    if (this.lanes.size >= MAX_LANES && !this.lanes.has(desk.id))
      this.lanes.delete(this.lanes.keys().next().value as number);
    this.lanes.set(desk.id, lane);
    return lane.ids;
  }

  /** Drops ids the caller found decided, so later leases do not ask about them again. */
  forget(desk: DeskEntity, decided: ReadonlySet<number>): void {
    const lane = this.lanes.get(desk.id);
    if (!lane || lane.key !== laneKey(desk) || decided.size === 0) return;
    lane.ids = lane.ids.filter((id) => !decided.has(id));
  }

  private async build(desk: DeskEntity, key: string): Promise<Lane> {
    const model = await this.predictions.current(desk);
    if (!model) return { key, ids: [] };
    const watched = desk.watch.map((c) => model.categories.indexOf(c)).filter((i) => i >= 0);
    const rule = predictionSetRule(model.calibration, setOptionsOf(desk, model.categories));
    const scored: Array<{ id: number; priority: number }> = [];
    for await (const { itemId, probs } of this.predictions.probabilities(desk, model)) {
      const priority = screenPriority(probs, rule(probs).categories, watched);
      if (priority !== null) scored.push({ id: itemId, priority });
    }
    // The sampling policy's order: highest probability of a watched category first, ties by newest item.
    scored.sort(byPriority);
    return { key, ids: scored.map((s) => s.id) };
  }
}

/** Everything the lane's order depends on. */
function laneKey(desk: DeskEntity): string {
  return JSON.stringify([
    desk.id,
    desk.currentModelVersion,
    desk.watch,
    desk.coverageTarget,
    desk.coverageTargets,
    desk.calibration,
    desk.confidence,
    desk.score,
  ]);
}
