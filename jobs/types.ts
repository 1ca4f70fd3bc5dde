/** A unit of scheduled work: `schedule` is a node-cron expression (six fields allowed, for seconds). */
export interface ScheduledJob {
  name: string;
  schedule: () => string;
  run: () => Promise<void>;
}
