const ISO_DATE_TIME =
  /^(\d{4})-(\d{2})-(\d{2})(?:[Tt ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d+))?)?([Zz]|[+-]\d{2}(?::?\d{2})?)?)?$/u;

function daysInMonth(year: number, month: number): number {
  if (month === 2) return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0 ? 29 : 28;
  return [4, 6, 9, 11].includes(month) ? 30 : 31;
}

function offsetMinutes(zone: string | undefined): number | null {
  if (zone === undefined || zone === 'Z' || zone === 'z') return 0;
  const sign = zone[0] === '-' ? -1 : 1;
  const digits = zone.slice(1).replace(':', '');
  const hours = Number(digits.slice(0, 2));
  const minutes = digits.length > 2 ? Number(digits.slice(2, 4)) : 0;
  if (hours > 23 || minutes > 59) return null;
  return sign * (hours * 60 + minutes);
}

/**
 * Parses an ISO 8601 calendar date or date-time, strictly: `Date.parse`
 * accepts many other shapes and rolls invalid days over ("2024-02-30"
 * becomes 1 March), which would store a date the file did not contain.
 *
 * Accepted: `YYYY-MM-DD`, then optionally `T` (or a space, as RFC 3339
 * allows) and `hh:mm`, `hh:mm:ss` or `hh:mm:ss.fraction` (a comma also
 * separates the fraction; digits beyond milliseconds are dropped), then
 * optionally `Z`, `±hh`, `±hhmm` or `±hh:mm`. A date without a time is
 * midnight UTC; a time without an offset is read as UTC. Leap seconds
 * (`:60`) and `24:00` are not accepted.
 *
 * @returns the instant, or `null` when the string is not such a date.
 */
export function parseIsoDateTime(value: string): Date | null {
  const match = ISO_DATE_TIME.exec(value);
  if (match === null) return null;
  // Groups that did not take part in the match are undefined.
  const groups: Array<string | undefined> = match;
  const [, y, mo, d, h, mi, s, fraction, zone] = groups;
  const year = Number(y);
  const month = Number(mo);
  const day = Number(d);
  const hour = h === undefined ? 0 : Number(h);
  const minute = mi === undefined ? 0 : Number(mi);
  const second = s === undefined ? 0 : Number(s);
  if (month < 1 || month > 12 || day < 1 || day > daysInMonth(year, month)) return null;
  if (hour > 23 || minute > 59 || second > 59) return null;
  const offset = offsetMinutes(zone);
  if (offset === null) return null;
  const millisecond = fraction === undefined ? 0 : Number(fraction.slice(0, 3).padEnd(3, '0'));
  const date = new Date(0);
  // setUTCFullYear, unlike Date.UTC, does not map years 0–99 to 1900–1999.
  date.setUTCFullYear(year, month - 1, day);
  date.setUTCHours(hour, minute - offset, second, millisecond);
  return date;
}
