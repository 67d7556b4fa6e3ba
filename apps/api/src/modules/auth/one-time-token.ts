import { createHash, randomBytes } from 'node:crypto';
import type { EntityManager } from 'typeorm';
import { queryRows } from '../../db/transaction.js';

export type TokenPurpose = 'invite' | 'reset';
export const TOKEN_LIFETIME_MINUTES: Record<TokenPurpose, number> = { invite: 7 * 24 * 60, reset: 60 };

const digest = (token: string) => createHash('sha256').update(token).digest('hex');

/** Issues a random single-use token; only its SHA-256 is stored, so a database leak reveals no link. */
export async function issueToken(tx: EntityManager, userId: string, purpose: TokenPurpose): Promise<string> {
  const token = randomBytes(32).toString('base64url');
  await tx.query(
    `INSERT INTO one_time_token (user_id, purpose, token_hash, expires_at)
     VALUES ($1, $2, $3, now() + make_interval(mins => $4))`,
    [userId, purpose, digest(token), TOKEN_LIFETIME_MINUTES[purpose]],
  );
  return token;
}

/** Marks the token used and returns its user, or null when it is unknown, used or expired. */
export async function consumeToken(tx: EntityManager, token: string, purpose: TokenPurpose): Promise<string | null> {
  const rows = await queryRows<{ user_id: string }>(
    tx,
    `UPDATE one_time_token SET used_at = now()
      WHERE token_hash = $1 AND purpose = $2 AND used_at IS NULL AND expires_at > now()
      RETURNING user_id`,
    [digest(token), purpose],
  );
  return rows[0]?.user_id ?? null;
}
