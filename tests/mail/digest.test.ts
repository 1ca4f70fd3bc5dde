import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { MailMessage, db } from '@/models';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import { dismissAlert } from '@/lib/alerts/triage';
import { enqueueDigests } from '@/lib/mail/digest';
import { makeRule, makeSeries, makeSnapshot, makeUser, watch } from '../alerts/helpers';

beforeAll(async () => {
  await db();
  await migrateUp();
});

describe('the daily digest', () => {
  it('sums up, once a day, the alerts on the series a user follows by digest', async () => {
    const lead = await makeUser('lead');
    const analyst = await makeUser('analyst');
    const reader = await makeUser('viewer', 'Dana Digest');
    const quiet = await makeUser('viewer');
    const followed = await makeSeries('followed-basin');
    const other = await makeSeries('other-basin');
    await watch(reader, followed, 'digest');
    await watch(quiet, other, 'digest');
    await makeRule(followed, lead);
    await makeRule(other, lead, { minTau: 0.9 });
    const report = await evaluateSnapshots([
      await makeSnapshot(followed, { tau: 0.61, surrogateP: 0.02 }),
      await makeSnapshot(other, { tau: 0.5, surrogateP: 0.02 }),
    ]);
    expect(report.opened).toHaveLength(1);
    await dismissAlert(report.opened[0], 'statistical-fluke', analyst);

    expect(await enqueueDigests()).toBe(1);
    const digests = await MailMessage.findAll({ where: { kind: 'digest' } });
    expect(digests.map((d) => d.toAddress)).toEqual([reader.email]);
    expect(digests[0].subject).toBe('[Brinkwatch] Daily digest: 1 alert on series you watch');
    expect(digests[0].textBody).toContain(`#${report.opened[0]} Series followed-basin`);
    expect(digests[0].textBody).toMatch(/warning|watch/);
    expect(digests[0].textBody).toContain('tau 0.61 (rising), surrogate p 0.02, dismissed');
    // A second run the same day (another scheduler, a restart) adds nothing.
    expect(await enqueueDigests()).toBe(0);
    // The next day only what happened since the last digest counts: nothing.
    expect(await enqueueDigests(new Date(Date.now() + 86_400_000))).toBe(0);
  });
});
