import { cronSetting } from '@/lib/runtime/config';
import { runDropIntake } from '@/lib/intake/drop-folders';
import type { ScheduledJob } from './types';

/** Takes in the complete CSV files of every series' drop folder (INGEST_CRON, default every minute). */
export const ingestJob: ScheduledJob = {
  name: 'ingest',
  schedule: () => cronSetting('INGEST_CRON'),
  run: async () => {
    await runDropIntake();
  },
};
