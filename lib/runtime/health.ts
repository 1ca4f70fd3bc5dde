import { Op } from 'sequelize';
import { MailMessage, db } from '@/models';
import { readAppState } from '@/lib/db/app-state';
import { databaseDialect, smtpConfigured } from '@/lib/runtime/config';

export const SCHEDULER_HEARTBEAT_KEY = 'scheduler.heartbeat';
/** The scheduler beats every 15 s; three missed beats and it counts as down. */
const HEARTBEAT_STALE_MS = 45_000;

export interface HealthReport {
  ok: boolean;
  /** `dialect` names the database in use (DATABASE_URL set: postgres). */
  db: { ok: boolean; dialect: 'sqlite' | 'postgres'; error?: string };
  scheduler: { ok: boolean; lastBeatAt: string | null; holder: string | null };
  mail: { ok: boolean; transport: 'smtp' | 'local-sink'; pending: number; failed: number };
}

/** Each part's state; `ok` is the database's, since without it nothing else can be answered. */
export async function fetchHealth(now = Date.now()): Promise<HealthReport> {
  const transport = smtpConfigured() ? 'smtp' : 'local-sink';
  const dialect = databaseDialect();
  try {
    const sequelize = await db();
    await sequelize.query('SELECT 1');
    const [beat, pending, failed] = await Promise.all([
      readAppState(SCHEDULER_HEARTBEAT_KEY),
      MailMessage.count({ where: { status: { [Op.in]: ['pending', 'sending'] } } }),
      MailMessage.count({ where: { status: 'failed' } }),
    ]);
    const lastBeat = beat ? beat.updatedAt.getTime() : null;
    return {
      ok: true,
      db: { ok: true, dialect },
      scheduler: {
        ok: lastBeat !== null && now - lastBeat < HEARTBEAT_STALE_MS,
        lastBeatAt: lastBeat === null ? null : new Date(lastBeat).toISOString(),
        holder: beat?.value ?? null,
      },
      mail: { ok: failed === 0, transport, pending, failed },
    };
  } catch (error) {
    return {
      ok: false,
      db: { ok: false, dialect, error: 'The database cannot be reached.' },
      scheduler: { ok: false, lastBeatAt: null, holder: null },
      mail: { ok: false, transport, pending: 0, failed: 0 },
    };
  }
}
