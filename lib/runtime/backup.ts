import fs from 'node:fs';
import path from 'node:path';
import { dataDir, databaseDialect } from '@/lib/runtime/config';
import { db } from '@/models';

/**
 * Writes a consistent copy of the live database with SQLite's `VACUUM INTO` (one read transaction, so writers
 * carry on and the copy reflects a single moment; see https://www.sqlite.org/lang_vacuum.html#vacuuminto).
 * PostgreSQL is backed up with its own tools (`pg_dump`, or continuous archiving), which the server's operators
 * run; this refuses there and says so.
 */
export async function backupDatabase(target?: string): Promise<string> {
  if (databaseDialect() === 'postgres') {
    throw new Error('the database is PostgreSQL (DATABASE_URL): back it up with pg_dump --format=custom (see README, Operating Brinkwatch)');
  }
  const file = path.resolve(target ?? path.join(dataDir(), 'backups', `brinkwatch-${new Date().toISOString().replace(/[:.]/g, '-')}.sqlite`));
  if (fs.existsSync(file)) throw new Error(`${file} already exists; choose another name.`);
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const sequelize = await db();
  await sequelize.query('VACUUM INTO :file', { replacements: { file } });
  return file;
}
