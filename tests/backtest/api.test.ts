import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

const SLUG = 'veskary-salinity-contrast';
let app: RunningApp;
let lead: Session;
let viewer: Session;
let ruleId: number;

async function waitFor<T>(read: () => Promise<T>, done: (v: T) => boolean, timeoutMs: number): Promise<T> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    const v = await read();
    if (done(v) || Date.now() > until) return v;
    await new Promise((r) => setTimeout(r, 250));
  }
}

describe('backtest API, job and cancel (real server and scheduler)', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, scheduler: true, env: { BACKTEST_CRON: '*/1 * * * * *' } });
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
    const rules = await (await viewer.fetch(`/api/series/${SLUG}/rules`)).json();
    ruleId = rules.items[0].id;
  }, 600_000);
  afterAll(async () => {
    await app?.stop();
  });

  it('checks roles: signed out 401, viewer 403 on POST, lead 202', async () => {
    expect((await new Session(app.baseUrl).json(`/api/rules/${ruleId}/backtest`, 'POST', {})).status).toBe(401);
    expect((await viewer.json(`/api/rules/${ruleId}/backtest`, 'POST', {})).status).toBe(403);
    expect((await viewer.json(`/api/series/${SLUG}/marks`, 'POST', { at: Date.now(), note: 'x' })).status).toBe(403);
    expect((await viewer.json(`/api/rules/${ruleId}/threshold`, 'POST', { threshold: 0.4 })).status).toBe(403);
    expect((await lead.json(`/api/rules/${ruleId}/backtest`, 'POST', { every: 0 })).status).toBe(422);
    expect((await viewer.fetch('/api/backtests')).status).toBe(200);
  });

  it('runs a queued backtest with calibration to the end and stores the result', async () => {
    const tippingPoints = ((await (await viewer.fetch(`/api/series/${SLUG}/marks`)).json()).marks as { kind: string }[]).filter(
      (m) => m.kind === 'tipping-point',
    );
    expect(tippingPoints.length).toBeGreaterThan(0);
    const res = await lead.json(`/api/rules/${ruleId}/backtest`, 'POST', { every: 5, calibration: { surrogates: 40, method: 'ar1' } });
    expect(res.status).toBe(202);
    const { jobId } = await res.json();
    const job = await waitFor(
      async () => (await viewer.fetch(`/api/backtests/${jobId}`)).json(),
      (j) => j.status === 'succeeded' || j.status === 'failed',
      120_000,
    );
    expect(job.error).toBeNull();
    expect(job.status).toBe('succeeded');
    expect(job.progress).toBe(1);
    expect(job.result.tippingPoints).toHaveLength(tippingPoints.length);
    expect(job.result.calibration.surrogates).toBe(40);
    expect(job.result.calibration.roc.length).toBeGreaterThan(10);
    const list = await (await viewer.fetch(`/api/backtests?rule=${ruleId}&series=${SLUG}`)).json();
    expect(list.backtests.map((b: { id: number }) => b.id)).toContain(jobId);

    const saved = await lead.json(`/api/rules/${ruleId}/threshold`, 'POST', { threshold: 0.45, jobId });
    expect(saved.status).toBe(200);
    expect((await saved.json()).minTau).toBe(0.45);
  }, 180_000);

  it('cancels a running calibration', async () => {
    const res = await lead.json(`/api/rules/${ruleId}/backtest`, 'POST', { every: 1, calibration: { surrogates: 2000, method: 'ar1' } });
    const { jobId } = await res.json();
    await waitFor(
      async () => (await viewer.fetch(`/api/backtests/${jobId}`)).json(),
      (j) => j.status !== 'queued',
      60_000,
    );
    expect((await viewer.json(`/api/backtests/${jobId}/cancel`, 'POST')).status).toBe(403);
    expect((await lead.json(`/api/backtests/${jobId}/cancel`, 'POST')).status).toBe(200);
    const job = await waitFor(
      async () => (await viewer.fetch(`/api/backtests/${jobId}`)).json(),
      (j) => j.status !== 'running' && j.status !== 'queued',
      60_000,
    );
    expect(job.status).toBe('cancelled');
    expect(job.result).toBeNull();
  }, 180_000);

  it('marks and removes a tipping point (lead), validating the instant', async () => {
    expect((await lead.json(`/api/series/${SLUG}/marks`, 'POST', { at: 'not a date' })).status).toBe(422);
    const made = await lead.json(`/api/series/${SLUG}/marks`, 'POST', { at: '2020-03-01T00:00:00Z', note: 'test mark' });
    expect(made.status).toBe(201);
    const { id, at } = await made.json();
    expect(at).toBe(Date.UTC(2020, 2, 1));
    expect((await viewer.fetch(`/api/marks/${id}`, { method: 'DELETE' })).status).toBe(403);
    expect((await lead.fetch(`/api/marks/${id}`, { method: 'DELETE' })).status).toBe(204);
  });

  it('answers at the former /transitions addresses for one release, saying where the marks moved', async () => {
    // RFC 9745 (Deprecation header) and RFC 8288 (Link, rel="successor-version").
    const listed = await viewer.fetch(`/api/series/${SLUG}/transitions`);
    expect(listed.status).toBe(200);
    expect(listed.headers.get('deprecation')).toBe('true');
    expect(listed.headers.get('link')).toBe(`</api/series/${SLUG}/marks>; rel="successor-version"`);
    const current = (await (await viewer.fetch(`/api/series/${SLUG}/marks`)).json()).marks;
    expect((await listed.json()).transitions).toEqual(current);

    // the former kind name is read as the new one
    const made = await lead.json(`/api/series/${SLUG}/transitions`, 'POST', { at: '2020-04-01T00:00:00Z', kind: 'transition' });
    expect(made.status).toBe(201);
    const { id, kind } = await made.json();
    expect(kind).toBe('tipping-point');
    const removed = await lead.fetch(`/api/transitions/${id}`, { method: 'DELETE' });
    expect(removed.status).toBe(204);
    expect(removed.headers.get('link')).toBe(`</api/marks/${id}>; rel="successor-version"`);
  });
});
