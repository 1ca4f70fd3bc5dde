import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SMTPServer } from 'smtp-server';
import { useTempDataDir } from '../support/temp-db';
import { freePort } from '../support/app';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { MailMessage, Observation, ReportSchedule, db } from '@/models';
import { deliverDueMail } from '@/lib/mail/sender';
import { startMailSink } from '@/lib/mail/sink';
import { createSchedule, describeUnsubscribe, readUnsubscribeToken, sendDueReports, unsubscribe, unsubscribeToken } from '@/lib/reports/schedules';
import { reportScheduleSchema } from '@/lib/schemas/report';
import { makeSeries, makeUser } from '../alerts/helpers';
import { readMailbox } from '../mail/support';

let sink: SMTPServer;
const mailbox = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-mailbox-'));
const DAY = 86_400_000;

beforeAll(async () => {
  await db();
  await migrateUp();
  const port = await freePort();
  process.env.SMTP_URL = `smtp://127.0.0.1:${port}`;
  sink = await startMailSink(port, mailbox);
});

afterAll(() => new Promise<void>((resolve) => sink.close(() => resolve())));

describe('scheduled period reports', () => {
  it('refuses a list with a bad address and folds duplicates', () => {
    expect(reportScheduleSchema.safeParse({ name: 'Funder', cadence: 'quarterly', recipients: ['not an address'] }).success).toBe(false);
    expect(reportScheduleSchema.parse({ name: 'Funder', cadence: 'quarterly', recipients: ['A@x.org', 'a@x.org'] }).recipients).toEqual(['a@x.org']);
  });

  it('reaches an address without an account once per period, and its unsubscribe link stops the next one', async () => {
    const lead = await makeUser('lead');
    const series = await makeSeries('reservoir-chl');
    await Observation.bulkCreate(Array.from({ length: 400 }, (_, i) => ({ seriesId: series.id, t: Date.UTC(2026, 0, 1) + i * DAY, value: i })));
    const schedule = await createSchedule(
      { name: 'Water authority', site: '', cadence: 'quarterly', recipients: ['funder@partner.example', lead.email], active: true },
      lead,
    );
    const made = Date.parse(schedule.createdAt);

    // The quarter the schedule was made in has not ended: nothing yet.
    expect(await sendDueReports(made + 1000)).toBe(0);
    // After it ends: one message per recipient, and not again on the next passes.
    const afterQuarter = Date.UTC(new Date(made).getUTCFullYear(), Math.floor(new Date(made).getUTCMonth() / 3) * 3 + 3, 2);
    expect(await sendDueReports(afterQuarter)).toBe(2);
    expect(await sendDueReports(afterQuarter + 3_600_000)).toBe(0);
    expect(await deliverDueMail()).toMatchObject({ sent: 2 });
    const received = readMailbox(mailbox).filter((m) => m.to.includes('funder@partner.example'));
    expect(received).toHaveLength(1);
    expect(received[0].subject).toContain('Water authority: period report');
    expect(received[0].text).toContain('Series reservoir-chl');
    expect(received[0].text).toContain('not forecasts'); // the standing caution travels with the report
    const link = /To stop receiving these: (\S+)/.exec(received[0].text)?.[1];
    expect(link).toMatch(/\/unsubscribe\/[\w-]+\.[\w-]+$/);

    // The link works without signing in: it names the address, and a forged one is refused.
    const token = decodeURIComponent(link!.split('/unsubscribe/')[1]);
    expect(readUnsubscribeToken(token)).toEqual({ scheduleId: schedule.id, address: 'funder@partner.example' });
    expect(readUnsubscribeToken(unsubscribeToken(schedule.id, 'funder@partner.example').replace(/.$/, (c) => (c === 'A' ? 'B' : 'A')))).toBeNull();
    expect(readUnsubscribeToken(`${Buffer.from(JSON.stringify([schedule.id, lead.email])).toString('base64url')}.${token.split('.')[1]}`)).toBeNull();
    expect(await describeUnsubscribe(token)).toEqual({ address: 'funder@partner.example', scheduleName: 'Water authority', subscribed: true });
    expect(await unsubscribe(token)).toEqual({ address: 'funder@partner.example', removed: true });
    expect(await unsubscribe(token)).toEqual({ address: 'funder@partner.example', removed: false });
    expect((await ReportSchedule.findByPk(schedule.id))!.recipients).toEqual([lead.email]);

    // The next quarter's report goes to the lead only.
    const nextQuarter = Date.UTC(new Date(afterQuarter).getUTCFullYear(), new Date(afterQuarter).getUTCMonth() + 3, 2);
    expect(await sendDueReports(nextQuarter)).toBe(1);
    const next = await MailMessage.findAll({ where: { kind: 'period-report' }, order: [['id', 'ASC']] });
    expect(next.map((m) => m.toAddress)).toEqual(['funder@partner.example', lead.email, lead.email]);
    await deliverDueMail();
    expect(readMailbox(mailbox).filter((m) => m.to.includes('funder@partner.example'))).toHaveLength(1);
  });
});
