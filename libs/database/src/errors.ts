/** The driver's error code of a database error (TypeORM wraps it as `driverError`), if any. */
export function dbErrorCode(e: unknown): string | undefined {
  const err = e as { code?: string; driverError?: { code?: string } } | null | undefined;
  return err?.driverError?.code ?? err?.code;
}

/** True when a database error is a unique-constraint violation (either database). */
export function isUniqueViolation(e: unknown): boolean {
  const code = dbErrorCode(e);
  const message = (e as { message?: unknown } | null | undefined)?.message;
  return (
    code === '23505' ||
    code === 'SQLITE_CONSTRAINT_UNIQUE' ||
    (typeof message === 'string' && /UNIQUE constraint failed/.test(message))
  );
}
