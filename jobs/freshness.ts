import { cronSetting } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import { checkFreshness } from '@/lib/alerts/lateness';
import { sendDueReports } from '@/lib/reports/schedules';
import type { ScheduledJob } from './types';

/**
 * The freshness watch (data-late alerts open and close) and, in the same pass, the scheduled period reports that
 * are due; both only enqueue mail, which the mail job sends. One lease, so two schedulers never run it together.
 */
export const freshnessJob: ScheduledJob = {
  name: 'freshness',
  schedule: () => cronSetting('FRESHNESS_CRON'),
  run: async () => {
    await withLease('freshness', 10 * 60_000, async () => {
      const now = Date.now();
      const report = await checkFreshness(now);
      if (report.opened.length || report.returned.length)
        console.log(`[freshness] data-late alerts opened ${report.opened.join(', ') || 'none'}; data back on ${report.returned.join(', ') || 'none'}`);
      await sendDueReports(now);
    });
  },
};
