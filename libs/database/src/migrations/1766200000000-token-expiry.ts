import type { MigrationInterface, QueryRunner } from 'typeorm';

/** Lifetime given to the API tokens that had none and do not belong to an admin. */
export const MIGRATED_TOKEN_DAYS = 90;

/**
 * API tokens expire: only an admin's may live for ever. Tokens of other accounts made before this had no expiry;
 * they now expire {@link MIGRATED_TOKEN_DAYS} days after the migration runs (README, "Accounts and tokens").
 * `down()` leaves the expiries as they are: a lifetime given here cannot be told from one chosen later.
 */
export class TokenExpiry1766200000000 implements MigrationInterface {
  name = 'TokenExpiry1766200000000';

  async up(qr: QueryRunner): Promise<void> {
    const pg = qr.dataSource.options.type === 'postgres';
    const until = new Date(Date.now() + MIGRATED_TOKEN_DAYS * 86_400_000);
    await qr.query(
      `UPDATE credentials SET expires_at = ${pg ? '$1' : '?'} WHERE kind = 'token' AND expires_at IS NULL AND revoked_at IS NULL AND user_id IN (SELECT id FROM users WHERE role <> 'admin')`,
      [pg ? until : until.toISOString().replace('T', ' ').replace('Z', '')],
    );
  }

  async down(): Promise<void> {
    // Nothing to undo in the schema; see the class comment.
  }
}
