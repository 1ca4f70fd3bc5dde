// Child process of feeds.bench.ts, so its peak RSS is the feed intake's alone: migrate, register four series with
// QC tests and a feed, take in the dropped file. Prints one JSON line.
import { migrateUp } from '@/migrations';
import { closeDatabase } from '@/models';
import { createSeries } from '@/lib/series/registry';
import { createFeed } from '@/lib/feeds/registry';
import { runDropIntake } from '@/lib/intake/drop-folders';

const VARIABLES = ['temp', 'sal', 'do', 'chl'];

async function main() {
  await migrateUp();
  for (const name of VARIABLES) {
    await createSeries(
      {
        slug: `bench-${name}`,
        name,
        intervalMs: 60_000,
        qc: { grossRange: { fail: [-5, 50] }, spike: { suspect: 1, fail: 3 }, flatLine: { tolerance: 0, suspect: 5, fail: 10 } },
      },
      null,
    );
  }
  await createFeed(
    {
      slug: 'bench-station',
      name: 'Bench station',
      timeColumn: 'time',
      columns: Object.fromEntries(VARIABLES.map((name) => [name, `bench-${name}`])),
      flagColumns: Object.fromEntries(VARIABLES.map((name) => [name, `${name}_qc`])),
    },
    null,
  );
  const t0 = performance.now();
  const results = await runDropIntake({ settleMs: 0 });
  const intakeMs = performance.now() - t0;
  console.log(JSON.stringify({ results, intakeMs, maxRssMb: process.resourceUsage().maxRSS / 1024 }));
  await closeDatabase();
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
