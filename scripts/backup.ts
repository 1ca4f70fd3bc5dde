import { backupDatabase } from '@/lib/runtime/backup';
import { closeDatabase } from '@/models';

/** `npm run backup [-- FILE]`: a consistent copy of the database, safe while the app runs. */
backupDatabase(process.argv[2])
  .then(async (file) => {
    console.log(file);
    await closeDatabase();
  })
  .catch((error) => {
    console.error(`backup failed: ${error instanceof Error ? error.message : error}`);
    process.exit(1);
  });
