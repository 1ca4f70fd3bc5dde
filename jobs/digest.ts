import { cronSetting } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import { enqueueDigests } from '@/lib/mail/digest';
import type { ScheduledJob } from './types';

export const digestJob: ScheduledJob = {
  name: 'digest',
  schedule: () => cronSetting('DIGEST_CRON'),
  run: async () => {
    await withLease('digest', 10 * 60_000, () => enqueueDigests());
  },
};
