// Child process of cycle.bench.ts: one scheduler's analysis cycle (jobs/analysis.ts runAnalysisCycle) on the bench's
// database. Connects and loads everything first, prints "ready", runs the cycle when told "go" on stdin (so several
// children start together and their start-up is not timed), then prints one JSON line and exits.
import { db, closeDatabase } from '@/models';
import { runAnalysisCycle } from '@/jobs/analysis';

async function main() {
  await db();
  console.log('ready');
  await new Promise<void>((resolve) => process.stdin.once('data', () => resolve()));
  const t0 = performance.now();
  const { analysed, snapshots } = await runAnalysisCycle();
  const ms = performance.now() - t0;
  const incremental = snapshots.filter((s) => s.provenance?.update?.mode === 'incremental').length;
  console.log(JSON.stringify({ analysed, incremental, ms }));
  await closeDatabase();
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
