/** True when a database error is a unique-constraint violation (either database). */
export function isUniqueViolation(e: unknown): boolean {
  const err = e as { code?: string; driverError?: { code?: string } };
  const code = err?.driverError?.code ?? err?.code;
  return code === '23505' || code === 'SQLITE_CONSTRAINT_UNIQUE' || /UNIQUE constraint failed/.test(String((e as Error)?.message));
}
