/**
 * JSON read back from storage, before its type tag and format version are checked: another kind of object, an
 * older format or nothing at all may arrive, so the tag and version are unknown until the reader has looked.
 */
export type StoredJson<T extends { type: string; version: number }> =
  (Omit<T, 'type' | 'version'> & { type: unknown; version: unknown }) | null | undefined;
