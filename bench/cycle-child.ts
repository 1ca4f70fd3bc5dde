// Child process of cycle.bench.ts: a long-lived scheduler's analysis cycles (jobs/analysis.ts runAnalysisCycle) on the
// bench's database. Connects and loads everything first, prints "ready", then runs one cycle per line on stdin (a JSON
// object of environment settings for that cycle), printing one JSON line after each; exits when stdin closes.
import readline from 'node:readline';
import { db, closeDatabase } from '@/models';
import { runAnalysisCycle } from '@/jobs/analysis';

async function main() {
  await db();
  console.log('ready');
  for await (const line of readline.createInterface({ input: process.stdin })) {
    const env = JSON.parse(line) as Record<string, string>;
    Object.assign(process.env, env);
    const t0 = performance.now();
    const cpu0 = process.cpuUsage();
    const { analysed, snapshots } = await runAnalysisCycle();
    const ms = performance.now() - t0;
    // CPU time of every thread of this process (surrogate workers and SQLite's included), less swayed than wall time
    // by other work on a shared machine.
    const used = process.cpuUsage(cpu0);
    const cpuMs = (used.user + used.system) / 1000;
    for (const key of Object.keys(env)) delete process.env[key];
    const incremental = snapshots.filter((s) => s.provenance?.update?.mode === 'incremental').length;
    console.log(JSON.stringify({ analysed, incremental, ms, cpuMs }));
  }
  await closeDatabase();
}

main().catch((error) => {
  console.error(error);
  process.exit(1);
});
