import type { HealthReport } from '@/lib/runtime/health';
import { formatAge, formatUtc } from './format';

export interface HealthNotice {
  key: 'db' | 'scheduler' | 'mail';
  text: string;
}

/**
 * What a signed-in person must be told about the service itself, from GET /api/health: a monitor that has quietly
 * stopped looks exactly like a quiet network, so a stopped scheduler (no intake, no analyses, no alerts, no mail)
 * and undeliverable mail are said on every screen. Nothing when all is well. O(1).
 */
export function healthNotices(report: HealthReport, now: number): HealthNotice[] {
  if (!report.db.ok) {
    return [{ key: 'db', text: 'The database cannot be reached: nothing new can be read or stored, and what you see may be out of date.' }];
  }
  const notices: HealthNotice[] = [];
  if (!report.scheduler.ok) {
    const last = report.scheduler.lastBeatAt === null ? null : Date.parse(report.scheduler.lastBeatAt);
    const since = last === null ? 'has not reported at all' : `last reported at ${formatUtc(last)} (${formatAge(now - last)} ago)`;
    notices.push({
      key: 'scheduler',
      text: `The scheduler ${since}: no data is taken in, no analyses run, and no alerts or mail go out until it runs again.`,
    });
  }
  if (report.mail.failed > 0) {
    const count = report.mail.failed === 1 ? '1 message' : `${report.mail.failed} messages`;
    notices.push({ key: 'mail', text: `${count} could not be delivered after every retry; an admin can send them again under Admin › Outbox and mailbox.` });
  }
  return notices;
}
