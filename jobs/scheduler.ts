import cron from 'node-cron';
import { assertConfig } from '@/lib/runtime/config';
import { shareAuthSecret } from '@/lib/runtime/secret';
import { migrateUp } from '@/migrations';
import { closeDatabase } from '@/models';
import { writeAppState } from '@/lib/db/app-state';
import { SCHEDULER_HEARTBEAT_KEY } from '@/lib/runtime/health';
import { PROCESS_HOLDER } from '@/lib/db/leases';
import { JOBS } from './index';

const HEARTBEAT_MS = 15_000;

function log(message: string): void {
  console.log(`[scheduler ${new Date().toISOString()}] ${message}`);
}

/**
 * The scheduler process: applies migrations, then runs each job of `JOBS` on its cron expression. A job never
 * overlaps itself in one process; across processes, jobs take database leases for the items they work on.
 */
async function main(): Promise<void> {
  assertConfig(log);
  await migrateUp();
  await shareAuthSecret();
  const beat = () => writeAppState(SCHEDULER_HEARTBEAT_KEY, PROCESS_HOLDER).catch((e) => log(`heartbeat failed: ${e}`));
  await beat();
  const heartbeat = setInterval(beat, HEARTBEAT_MS);
  const tasks = JOBS.map((job) => {
    let running = false;
    return cron.schedule(
      job.schedule(),
      async () => {
        if (running) return;
        running = true;
        try {
          await job.run();
        } catch (error) {
          log(`${job.name} failed: ${error instanceof Error ? error.stack : error}`);
        } finally {
          running = false;
        }
      },
      { name: job.name },
    );
  });
  log(`started ${JOBS.map((j) => `${j.name} (${j.schedule()})`).join(', ') || 'no jobs'} as ${PROCESS_HOLDER}`);
  const stop = async () => {
    clearInterval(heartbeat);
    for (const task of tasks) await task.stop();
    await closeDatabase().catch(() => undefined);
    process.exit(0);
  };
  process.on('SIGTERM', stop);
  process.on('SIGINT', stop);
}

main().catch((error) => {
  console.error('[scheduler] could not start', error);
  process.exit(1);
});
