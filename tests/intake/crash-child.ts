// Child process of crash.test.ts: one pass of the drop-folder intake on the DATA_DIR it is given.
import { runDropIntake } from '@/lib/intake/drop-folders';
import { closeDatabase } from '@/models';

runDropIntake({ settleMs: 0 }).then(async (results) => {
  console.log(`RESULT ${JSON.stringify(results)}`);
  await closeDatabase();
  process.exit(0);
});
