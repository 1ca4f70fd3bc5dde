import { requeueAbandonedBacktests, runNextBacktest } from '@/lib/backtest/jobs';
import { cronSetting } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import type { ScheduledJob } from './types';

const LEASE = 'backtests';
const LEASE_TTL_MS = 60_000;
/** A long backtest outlives many ticks; the lease's holder is this process, so overlap is stopped here too. */
let busy = false;

/**
 * Runs queued backtests one after another while holding the 'backtests' lease, so two scheduler processes never
 * run one twice. Work left 'running' when the lease is first won belonged to a holder whose lease expired.
 */
export const backtestJob: ScheduledJob = {
  name: 'backtests',
  schedule: () => cronSetting('BACKTEST_CRON'),
  run: async () => {
    if (busy) return;
    busy = true;
    try {
      await withLease(LEASE, LEASE_TTL_MS, async () => {
        await requeueAbandonedBacktests();
        while ((await runNextBacktest()) !== null);
      });
    } finally {
      busy = false;
    }
  },
};
