import { spawn, type ChildProcess } from 'node:child_process';
import path from 'node:path';
import { assertConfig, config, dataDir, databaseDialect, databasePath } from '@/lib/runtime/config';
import { ensureAuthSecret, shareAuthSecret } from '@/lib/runtime/secret';
import { buildIfNeeded } from '@/lib/runtime/build';
import { startMailSink } from '@/lib/mail/sink';
import { migrateUp } from '@/migrations';
import { closeDatabase } from '@/models';
import { DEMO_USERS, seedIfEmpty } from '@/lib/demo/seed';

const ROOT = process.cwd();

/** Where the PostgreSQL server is, without the credentials DATABASE_URL may carry. */
function databaseHost(): string {
  const url = new URL(config().DATABASE_URL!);
  return `${url.host}${url.pathname}`;
}
const log = (line: string) => console.log(`[brinkwatch] ${line}`);

/**
 * `npm start`: the whole product from a fresh clone. Migrates, seeds once, builds when needed, then runs the web
 * server and the scheduler as child processes (restarting the scheduler if it dies) and, without SMTP_URL, a local
 * SMTP stand-in.
 */
async function main(): Promise<void> {
  const settings = assertConfig((line) => log(line));
  process.env.DATA_DIR = dataDir();
  const port = settings.PORT;
  const host = settings.HOST;
  process.env.NEXTAUTH_URL ||= `http://localhost:${port}`;
  const password = settings.DEMO_PASSWORD;

  const applied = await migrateUp();
  if (applied.length) log(`applied migrations: ${applied.join(', ')}`);
  await shareAuthSecret();
  process.env.NEXTAUTH_SECRET = ensureAuthSecret();
  const seeded = await seedIfEmpty({ demo: settings.SEED_DEMO, password });
  await closeDatabase();
  if (seeded) log('seeded the demo network');

  if (!settings.SKIP_BUILD) await buildIfNeeded(log);

  const children: ChildProcess[] = [];
  let stopping = false;
  const sink = settings.SMTP_URL ? null : await startMailSink(settings.MAIL_SINK_PORT);
  if (sink) log(`local mail sink on smtp://127.0.0.1:${settings.MAIL_SINK_PORT} (read it on /admin/mailbox)`);

  const web = spawn(process.execPath, [path.join(ROOT, 'scripts/web.mjs')], {
    cwd: ROOT,
    stdio: 'inherit',
    env: { ...process.env, PORT: String(port), HOST: host, NEXT_TELEMETRY_DISABLED: '1' },
  });
  children.push(web);

  const startScheduler = () => {
    if (!settings.START_SCHEDULER) return;
    const scheduler = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, 'jobs/scheduler.ts')], {
      cwd: ROOT,
      stdio: 'inherit',
      env: process.env,
    });
    children.push(scheduler);
    scheduler.on('exit', (code, signal) => {
      children.splice(children.indexOf(scheduler), 1);
      if (stopping) return;
      log(`scheduler exited (${signal ?? code}); restarting in 2 s`);
      setTimeout(startScheduler, 2000);
    });
  };
  startScheduler();

  const stop = (exitCode: number) => {
    if (stopping) return;
    stopping = true;
    for (const child of children) child.kill('SIGTERM');
    sink?.close(() => undefined);
    setTimeout(() => process.exit(exitCode), 1500).unref();
  };
  web.on('exit', (code) => {
    if (!stopping) {
      log(`web server exited (${code}); stopping`);
      stop(code ?? 1);
    }
  });
  process.on('SIGINT', () => stop(0));
  process.on('SIGTERM', () => stop(0));

  log(`database ${databaseDialect() === 'postgres' ? `PostgreSQL ${databaseHost()}` : databasePath()}`);
  log(`open http://localhost:${port}  — demo accounts (password from DEMO_PASSWORD, default "brinkwatch-demo"):`);
  for (const user of DEMO_USERS) log(`  ${user.role.padEnd(8)} ${user.email}`);
}

main().catch((error) => {
  console.error('[brinkwatch] could not start', error);
  process.exit(1);
});
