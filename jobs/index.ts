import type { ScheduledJob } from './types';
import { analysisJob } from './analysis';
import { mailJob } from './mail';
import { digestJob } from './digest';
import { backtestJob } from './backtest';
import { ingestJob } from './ingest';
import { demoFeedJob } from './demo-feed';
import { webhookJob } from './webhooks';
import { freshnessJob } from './freshness';

/** Every scheduled job of the product, in one list; the scheduler runs each on its own cron expression. */
export const JOBS: ScheduledJob[] = [analysisJob, mailJob, digestJob, backtestJob, ingestJob, demoFeedJob, webhookJob, freshnessJob];
