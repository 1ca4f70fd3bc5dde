// Child process of intake.bench.ts, so its peak RSS is the intake's alone: migrate, register, take in the dropped
// file, then time range reads. Prints one JSON line.
import { migrateUp } from '@/migrations';
import { closeDatabase } from '@/models';
import { createSeries } from '@/lib/series/registry';
import { runDropIntake } from '@/lib/intake/drop-folders';
import { loadObservations } from '@/lib/analysis/observations';

async function main() {
  await migrateUp();
  const series = await createSeries({ slug: 'bench-series', name: 'Bench series' }, null);
  const t0 = performance.now();
  const results = await runDropIntake({ settleMs: 0 });
  const intakeMs = performance.now() - t0;
  const from = Number(process.env.BENCH_FROM);
  const reads: number[] = [];
  let points = 0;
  for (let i = 0; i < 7; i++) {
    const start = from + i * 1000 * 60_000;
    const r0 = performance.now();
    points = (await loadObservations(series.id, { from: start, to: start + (100_000 - 1) * 60_000 })).time.length;
    reads.push(performance.now() - r0);
  }
  reads.sort((a, b) => a - b);
  console.log(JSON.stringify({ results, intakeMs, maxRssMb: process.resourceUsage().maxRSS / 1024, readMs: reads[3], points }));
  await closeDatabase();
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
