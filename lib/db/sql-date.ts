/**
 * An instant as Sequelize stores DATE columns in SQLite ('YYYY-MM-DD HH:MM:SS.SSS +00:00'). Raw SQL that writes or
 * compares such columns must use the same text, or string comparison orders 'T'-separated ISO stamps wrongly.
 * PostgreSQL's DATE columns are `timestamp with time zone`, which reads this text as the same instant, so raw SQL
 * passes `sqlDate` on both.
 */
export function sqlDate(instant: number | Date): string {
  const ms = typeof instant === 'number' ? instant : instant.getTime();
  return new Date(ms).toISOString().replace('T', ' ').replace('Z', ' +00:00');
}

/** The inverse of `sqlDate`: a DATE column read by raw SQL (SQLite: that text; PostgreSQL: a Date), as an ISO 8601 UTC string. */
export function isoFromSqlDate(value: unknown): string {
  if (value instanceof Date) return value.toISOString();
  return new Date(String(value).replace(' +00:00', 'Z').replace(' ', 'T')).toISOString();
}
