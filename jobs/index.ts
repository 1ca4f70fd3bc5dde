import type { ScheduledJob } from './types';

/** Every scheduled job of the product, in one list; the scheduler runs each on its own cron expression. */
export const JOBS: ScheduledJob[] = [];
