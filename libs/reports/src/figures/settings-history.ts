/** One line of the audit trail that changed a desk's settings. */
export interface SettingsEvent {
  at: Date;
  actor: string;
  action: string;
  before: Record<string, unknown> | null;
  after: Record<string, unknown> | null;
}

/**
 * A desk's settings through time, rebuilt from the audit trail: starting
 * from the settings as they are now and undoing every recorded change,
 * newest first, gives the settings at creation; replaying the changes gives
 * them at any moment. Works whether or not the creation itself was recorded.
 */
export class SettingsHistory {
  private readonly initial: Record<string, unknown>;
  private readonly changes: SettingsEvent[];

  /** @param events the desk's `desk.update` events, oldest first */
  constructor(current: Record<string, unknown>, events: readonly SettingsEvent[]) {
    this.changes = events.filter((e) => e.action === 'desk.update');
    const state = { ...current };
    for (const e of [...this.changes].reverse()) Object.assign(state, e.before ?? {});
    this.initial = state;
  }

  /** The settings in force at `t` (changes at exactly `t` included). */
  at(t: Date): Record<string, unknown> {
    const state = { ...this.initial };
    for (const e of this.changes) if (e.at.getTime() <= t.getTime()) Object.assign(state, e.after ?? {});
    return state;
  }

  /** The changes made after `from` and up to `to`. */
  between(from: Date, to: Date): SettingsEvent[] {
    return this.changes.filter((e) => e.at.getTime() > from.getTime() && e.at.getTime() <= to.getTime());
  }
}
