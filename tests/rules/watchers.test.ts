import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';

// The test reads the app's own database (WAL mode allows it) for the audit trail, so it points at the app's DATA_DIR first.
const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-watchers-'));
useDataDir(dataDir);

import { AuditEntry, closeDatabase, db } from '@/models';
import { useDataDir } from '../support/temp-db';

let app: RunningApp;
let lead: Session, analyst: Session, viewer: Session;
const SLUG = 'who-hears-test';
let analystId: number;

beforeAll(async () => {
  app = await startApp({ dataDir, scheduler: false });
  [lead, analyst, viewer] = await Promise.all(['lead', 'analyst', 'viewer'].map((role) => signedIn(app.baseUrl, `${role}@brinkwatch.test`, DEMO_PASSWORD)));
  expect((await lead.json('/api/series', 'POST', { slug: SLUG, name: 'Who hears', intervalMs: 86_400_000 })).status).toBe(201);
  analystId = (await (await analyst.fetch('/api/account')).json()).id;
}, 600_000);

afterAll(async () => {
  await app?.stop();
  await closeDatabase();
});

const watchersOf = async (session: Session) =>
  (await (await session.fetch(`/api/series/${SLUG}/watchers`)).json()).items as { userId: number; mode: string; role: string }[];

describe('who hears (GET/PUT /api/series/{slug}/watchers)', () => {
  it('a lead sees every active user, each not notified until someone chooses', async () => {
    const items = await watchersOf(lead);
    expect(items.map((w) => w.role).sort()).toEqual(['admin', 'analyst', 'lead', 'viewer']);
    expect(new Set(items.map((w) => w.mode))).toEqual(new Set(['none']));
  });

  it('a lead sets how someone hears; that person sees it on their own account, and the change is audited', async () => {
    const response = await lead.json(`/api/series/${SLUG}/watchers`, 'PUT', { watchers: [{ userId: analystId, mode: 'immediate' }] });
    expect(response.status).toBe(200);
    expect((await response.json()).items.find((w: { userId: number }) => w.userId === analystId).mode).toBe('immediate');
    expect((await (await analyst.fetch('/api/watches')).json()).items).toEqual([expect.objectContaining({ slug: SLUG, mode: 'immediate' })]);
    await db();
    const audit = await AuditEntry.findAll({ where: { action: 'watch.set-for' } });
    expect(audit.map((a) => a.details)).toEqual([expect.objectContaining({ mode: 'immediate', userId: analystId })]);
  });

  it('each person still changes their own choice, and the lead sees it', async () => {
    expect((await analyst.json(`/api/series/${SLUG}/watch`, 'PUT', { mode: 'digest' })).status).toBe(200);
    expect((await watchersOf(lead)).find((w) => w.userId === analystId)?.mode).toBe('digest');
  });

  it('below lead the list and the change are refused; an unknown user or mode is a 422 with the field named', async () => {
    expect((await analyst.fetch(`/api/series/${SLUG}/watchers`)).status).toBe(403);
    expect((await viewer.json(`/api/series/${SLUG}/watchers`, 'PUT', { watchers: [{ userId: analystId, mode: 'none' }] })).status).toBe(403);
    const unknown = await lead.json(`/api/series/${SLUG}/watchers`, 'PUT', { watchers: [{ userId: 999_999, mode: 'digest' }] });
    expect(unknown.status).toBe(422);
    expect((await unknown.json()).error.fields.watchers).toBeDefined();
    expect((await lead.json(`/api/series/${SLUG}/watchers`, 'PUT', { watchers: [{ userId: analystId, mode: 'hourly' }] })).status).toBe(422);
    expect((await lead.fetch('/api/series/no-such-series/watchers')).status).toBe(404);
  });
});

describe('preferences and the rule preview over HTTP', () => {
  it('a viewer saves a chart order and reads it back; a bad one is a 422', async () => {
    const saved = await viewer.json('/api/account/preferences', 'PUT', { seriesCharts: ['variance', 'record'] });
    expect(saved.status).toBe(200);
    expect(await (await viewer.fetch('/api/account/preferences')).json()).toEqual({ seriesCharts: ['variance', 'record'] });
    expect((await viewer.json('/api/account/preferences', 'PUT', { seriesCharts: ['nope'] })).status).toBe(422);
  });

  it('an analyst previews a draft (nothing analysed yet); a viewer may not; a Kendall p gate is a 422', async () => {
    const preview = await analyst.json(`/api/series/${SLUG}/rules/preview`, 'POST', { rule: { indicator: 'ac1', minTau: 0.3 } });
    expect(preview.status).toBe(200);
    expect(await preview.json()).toEqual({ snapshot: null, preview: null, refused: {} });
    expect((await viewer.json(`/api/series/${SLUG}/rules/preview`, 'POST', { rule: { indicator: 'ac1', minTau: 0.3 } })).status).toBe(403);
    const gated = await analyst.json(`/api/series/${SLUG}/rules/preview`, 'POST', { rule: { indicator: 'ac1', minTau: 0.3, maxKendallP: 0.05 } });
    expect(gated.status).toBe(422);
  });
});
