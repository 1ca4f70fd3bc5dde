import { cronSetting } from '@/lib/runtime/config';
import { deliverDueWebhooks } from '@/lib/webhooks/sender';
import type { ScheduledJob } from './types';

/** Sends what the webhook outbox holds; claims make it safe for several schedulers to run this at once. */
export const webhookJob: ScheduledJob = {
  name: 'webhooks',
  schedule: () => cronSetting('WEBHOOK_CRON'),
  run: async () => {
    const report = await deliverDueWebhooks();
    if (report.retrying || report.failed)
      console.warn(`[webhooks] of ${report.claimed} deliveries ${report.retrying} will be retried and ${report.failed} failed for good`);
  },
};
