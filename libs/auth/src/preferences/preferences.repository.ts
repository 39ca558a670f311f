import { Inject, Injectable } from '@nestjs/common';
import { Database } from '#database';

/** All SQL of `user_preferences`: one JSON row per account. */
@Injectable()
export class PreferencesRepository {
  constructor(@Inject(Database) private readonly db: Database) {}

  /** The account's stored preferences as saved (fields of older saves may be missing); undefined when it never saved. */
  async get(userId: number): Promise<Record<string, unknown> | undefined> {
    const row = await this.db.queryOne<{ preferences: string }>(
      null,
      'SELECT preferences FROM user_preferences WHERE user_id = $1',
      [userId],
    );
    return row ? (JSON.parse(row.preferences) as Record<string, unknown>) : undefined;
  }

  async put(userId: number, preferences: object, at: Date): Promise<void> {
    await this.db.write(async (m) => {
      await this.db.query(
        m,
        `INSERT INTO user_preferences (user_id, preferences, updated_at) VALUES ($1, $2, $3)
         ON CONFLICT (user_id) DO UPDATE SET preferences = excluded.preferences, updated_at = excluded.updated_at`,
        [userId, JSON.stringify(preferences), this.db.time(at)],
      );
    });
  }
}
