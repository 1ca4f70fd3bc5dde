import { cronSetting } from '@/lib/runtime/config';
import { deliverDueMail } from '@/lib/mail/sender';
import type { ScheduledJob } from './types';

/** Sends what the outbox holds; claims make it safe for several schedulers to run this at once. */
export const mailJob: ScheduledJob = {
  name: 'mail',
  schedule: () => cronSetting('MAIL_CRON'),
  run: async () => {
    const report = await deliverDueMail();
    if (report.failed) console.warn(`[mail] ${report.failed} of ${report.claimed} messages failed; they will be retried`);
  },
};
