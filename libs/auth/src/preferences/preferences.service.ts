import { Inject, Injectable } from '@nestjs/common';
import type { Principal } from '../principal.js';
import { PreferencesRepository } from './preferences.repository.js';

/** One account's own screen preferences; the same on every browser it signs in from. */
export interface Preferences {
  /** Blur each text on the queue until the reviewer reveals it. */
  blurText: boolean;
  /** Remind the reviewer to take a break after this many minutes on the queue; null: never. */
  breakReminderMinutes: number | null;
}

export const DEFAULT_PREFERENCES: Preferences = { blurText: false, breakReminderMinutes: null };
export const BREAK_MINUTES_MIN = 5;
export const BREAK_MINUTES_MAX = 480;

/** Reads and replaces the signed-in account's preferences (`user_preferences`, one JSON row per account). */
@Injectable()
export class PreferencesService {
  constructor(@Inject(PreferencesRepository) private readonly stored: PreferencesRepository) {}

  async get(user: Principal): Promise<Preferences> {
    const saved = await this.stored.get(user.id);
    if (!saved) return { ...DEFAULT_PREFERENCES };
    // Members added later read their default until the account saves again.
    return { ...DEFAULT_PREFERENCES, ...pick(saved) };
  }

  async put(user: Principal, preferences: Preferences): Promise<Preferences> {
    const clean = { ...DEFAULT_PREFERENCES, ...pick(preferences) };
    await this.stored.put(user.id, clean, new Date());
    return clean;
  }
}

function pick(p: Partial<Preferences>): Partial<Preferences> {
  const out: Partial<Preferences> = {};
  if (typeof p.blurText === 'boolean') out.blurText = p.blurText;
  if (p.breakReminderMinutes === null || typeof p.breakReminderMinutes === 'number')
    out.breakReminderMinutes = p.breakReminderMinutes;
  return out;
}
