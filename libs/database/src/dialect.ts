/** The two relational databases Cribra runs on. */
export type Dialect = 'sqlite' | 'postgres';

/** Column types that differ between the two databases; everything else uses a shared name. */
export interface DialectTypes {
  timestamp: 'timestamptz' | 'datetime';
}

export function dialectTypes(dialect: Dialect): DialectTypes {
  return { timestamp: dialect === 'postgres' ? 'timestamptz' : 'datetime' };
}
