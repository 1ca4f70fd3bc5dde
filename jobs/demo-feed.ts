import { cronSetting } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import { runDemoFeed } from '@/lib/demo/feed';
import type { ScheduledJob } from './types';

/**
 * The live demo's stations (DEMO_FEED_CRON, default every 2 minutes): a no-op unless the installation was seeded
 * with the demo and SEED_DEMO is not 0. Under one lease, so two schedulers never deliver the same points twice.
 */
export const demoFeedJob: ScheduledJob = {
  name: 'demo-feed',
  schedule: () => cronSetting('DEMO_FEED_CRON'),
  run: async () => {
    await withLease('demo-feed', 60_000, () => runDemoFeed());
  },
};
