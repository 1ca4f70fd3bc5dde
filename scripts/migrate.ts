import { migrateDown, migrateUp } from '@/migrations';
import { closeDatabase } from '@/models';

/** `npm run migrate` applies pending migrations; `npm run migrate -- down` reverts them all. */
async function main(): Promise<void> {
  const names = process.argv[2] === 'down' ? await migrateDown() : await migrateUp();
  console.log(names.length ? names.join('\n') : 'schema is up to date');
  await closeDatabase();
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
