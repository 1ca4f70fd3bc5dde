import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { RawDb } from './sqlite';

const CORPUS = path.resolve(__dirname, '../../fixtures/csv');
interface Expectation {
  fileError?: string;
  usable?: number;
  rejectedLines?: number[];
  mapping?: Record<string, unknown>;
  timeZone?: string;
}
const expected = JSON.parse(fs.readFileSync(path.join(CORPUS, 'expected.json'), 'utf8')) as Record<string, Expectation>;
const corpus = Object.entries(expected).filter(([file]) => !file.startsWith('_'));

/** Tables whose rows record that a request was seen (runs, audit, leases, throttle) rather than what is stored. */
const BOOKKEEPING = ['audit_log', 'ingest_runs', 'leases', 'app_state', 'sign_in_throttle'];

const SQL_TEXT = `Robert'); DROP TABLE series; -- " OR 1=1; /* */ UNION SELECT password_hash FROM users`;
const SCRIPT_TEXT = `<script>window.__pwned = 1</script><img src=x onerror="window.__pwned = 2"> & "quotes"`;

function ok(response: Response, status: number) {
  expect(response.status, `${response.url}`).toBe(status);
  return response;
}

async function errorBody(response: Response): Promise<{ code: string; message: string }> {
  expect(response.headers.get('content-type')).toMatch(/application\/json/);
  const body = await response.json();
  expect(body.error.message.length).toBeGreaterThan(5);
  expect(JSON.stringify(body)).not.toMatch(/SQLITE|at \w+ \(|\.ts:\d+/);
  return body.error;
}

function nested(depth: number): unknown {
  let value: unknown = { time: '2024-01-01T00:00:00Z', value: 1 };
  for (let i = 0; i < depth; i++) value = { child: value };
  return value;
}

describe('hostile input against the started product', () => {
  let app: RunningApp;
  let lead: Session;
  let admin: Session;
  let analyst: Session;
  let raw: RawDb;
  let token: string;
  let outside: string;
  const slug = 'hostile-target';

  beforeAll(async () => {
    app = await startApp({ demo: false, env: { INGEST_CRON: '*/1 * * * * *', ANALYSIS_CRON: '0 0 1 1 *' } });
    [lead, admin, analyst] = await Promise.all(['lead', 'admin', 'analyst'].map((role) => signedIn(app.baseUrl, `${role}@brinkwatch.test`, DEMO_PASSWORD)));
    ok(await lead.json('/api/series', 'POST', { slug, name: 'Hostile target' }), 201);
    token = (await ok(await admin.json(`/api/series/${slug}/tokens`, 'POST', { label: 'hostile' }), 201).json()).token;
    expect(token).toEqual(expect.any(String));
    raw = await RawDb.forDataDir(app.dataDir);
    outside = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-outside-'));
  });
  afterAll(async () => {
    await raw?.close();
    await app?.stop();
  });

  test('the bad-CSV corpus through the push API: each file stored as expected or refused with a 422 and a rejected run', async () => {
    for (const [index, [file, expectation]] of corpus.entries()) {
      const target = `corpus-${index}`;
      ok(
        await lead.json('/api/series', 'POST', { slug: target, name: `Corpus ${file}`, ...(expectation.timeZone ? { timeZone: expectation.timeZone } : {}) }),
        201,
      );
      const query = expectation.mapping ? `?mapping=${encodeURIComponent(JSON.stringify(expectation.mapping))}` : '';
      const response = await lead.fetch(`/api/series/${target}/observations${query}`, {
        method: 'POST',
        headers: { 'content-type': 'text/csv' },
        body: fs.readFileSync(path.join(CORPUS, file)),
      });
      const [{ id }] = await raw.all<{ id: number }>('SELECT id FROM series WHERE slug = ?', [target]);
      const stored = await raw.count('observations', 'series_id = ?', [id]);
      const runs = await raw.all<{ status: string }>('SELECT status FROM ingest_runs WHERE series_id = ?', [id]);
      if (expectation.fileError || expectation.usable === 0) {
        expect(response.status, file).toBe(422);
        await errorBody(response);
        expect(stored, file).toBe(0);
        expect(runs, file).toEqual([{ status: 'rejected' }]);
      } else {
        expect(response.status, `${file}: ${await response.clone().text()}`).toBe(200);
        const body = await response.json();
        expect(body.accepted, file).toBe(expectation.usable);
        expect(stored, file).toBe(expectation.usable);
        expect(
          body.rejected.map((r: { line: number }) => r.line).sort((a: number, b: number) => a - b),
          file,
        ).toEqual(expectation.rejectedLines ?? []);
        expect(runs, file).toEqual([{ status: 'succeeded' }]);
      }
    }
  });

  test('oversize, deeply nested, wrong-type, traversal and cross-series requests get a clear 4xx and store nothing', async () => {
    const before = await raw.tableCounts(BOOKKEEPING);
    const push = (init: RequestInit, target = slug) =>
      fetch(`${app.baseUrl}/api/series/${target}/observations`, { method: 'POST', ...init, headers: { authorization: `Bearer ${token}`, ...init.headers } });
    const cases: [string, () => Promise<Response>, number | number[]][] = [
      // Oversize: past the 50 MB intake limit and the 1 MB JSON limit (lib/intake/request-body.ts, lib/http/body.ts).
      ['push > 50 MB', () => push({ headers: { 'content-type': 'text/csv' }, body: `time,value\n${'2024-01-01T00:00:00Z,1\n'.repeat(2_500_000)}` }), 413],
      ['series JSON > 1 MB', () => lead.json('/api/series', 'POST', { slug: 'too-big', name: 'x', description: 'y'.repeat(1_100_000) }), 413],
      ['note JSON > 1 MB', () => analyst.json('/api/alerts/1/notes', 'POST', { body: 'z'.repeat(1_100_000) }), 413],
      // Nesting past the guard of 20 levels, and a body that is only brackets.
      ['nested JSON to /api/series', () => lead.json('/api/series', 'POST', { slug: 'nested', name: 'n', extra: nested(200) }), 422],
      ['nested JSON push', () => push({ headers: { 'content-type': 'application/json' }, body: JSON.stringify([nested(200)]) }), 422],
      ['100,000 open brackets', () => push({ headers: { 'content-type': 'application/json' }, body: '['.repeat(100_000) }), 422],
      ['malformed JSON', () => lead.fetch('/api/series', { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"slug": "x",' }), 422],
      // Wrong content types.
      [
        'series as text/plain',
        () => lead.fetch('/api/series', { method: 'POST', headers: { 'content-type': 'text/plain' }, body: '{"slug":"plain","name":"Plain"}' }),
        415,
      ],
      [
        'series as form',
        () => lead.fetch('/api/series', { method: 'POST', headers: { 'content-type': 'application/x-www-form-urlencoded' }, body: 'slug=form&name=Form' }),
        415,
      ],
      ['push as XML', () => push({ headers: { 'content-type': 'application/xml' }, body: '<points><p t="2024-01-01" v="1"/></points>' }), 415],
      ['push without content type', () => push({ body: new Blob(['time,value\n2024-01-01T00:00:00Z,1\n']) }), 415],
      ['upload as JSON', () => lead.json(`/api/series/${slug}/uploads`, 'POST', [{ time: '2024-01-01T00:00:00Z', value: 1 }]), 415],
      // Path traversal in slugs, plain and encoded; the token's own series only.
      ['slug ../', () => lead.json('/api/series', 'POST', { slug: '../../etc', name: 'Traversal' }), 422],
      ['slug with encoded separators', () => lead.json('/api/series', 'POST', { slug: '..%2f..%2fetc', name: 'Traversal' }), 422],
      [
        'encoded ../ in a push path',
        () => push({ headers: { 'content-type': 'text/csv' }, body: 'time,value\n2024-01-01T00:00:00Z,1\n' }, '..%2F..%2Fhostile-target'),
        [403, 404],
      ],
      ['double-encoded ../ in a read path', () => lead.fetch('/api/series/%252e%252e%252fhostile-target/settings-history'), 404],
      ['dot-dot segment in a read path', () => lead.fetch('/api/series/%2e%2e/settings-history'), 404],
      ['token on another series', () => push({ headers: { 'content-type': 'text/csv' }, body: 'time,value\n2024-01-01T00:00:00Z,1\n' }, 'corpus-0'), 403],
      [
        'forged token',
        () =>
          fetch(`${app.baseUrl}/api/series/${slug}/observations`, {
            method: 'POST',
            headers: { authorization: `Bearer ${token}x`, 'content-type': 'text/csv' },
            body: 'time,value\n2024-01-01T00:00:00Z,1\n',
          }),
        401,
      ],
      // SQL in query parameters and ids: validated, never spliced.
      ['SQL in a queue filter', () => lead.fetch(`/api/alerts?queue=${encodeURIComponent("all' OR '1'='1")}`), 422],
      ['SQL in an id', () => analyst.json(`/api/alerts/${encodeURIComponent('1 OR 1=1')}/actions`, 'POST', { action: 'acknowledge', version: 1 }), [404, 422]],
    ];
    for (const [name, send, status] of cases) {
      const response = await send();
      expect(
        [status].flat(),
        `${name} answered ${response.status}: ${await response
          .clone()
          .text()
          .then((t) => t.slice(0, 300))}`,
      ).toContain(response.status);
      if (response.headers.get('content-type')?.includes('json')) await errorBody(response);
      else await response.arrayBuffer();
    }
    expect(await raw.tableCounts(BOOKKEEPING)).toEqual(before);
    // Rejected pushes are reported as runs; none stored anything.
    const runs = await raw.all<{ status: string; accepted: number }>(
      'SELECT status, accepted FROM ingest_runs WHERE series_id = (SELECT id FROM series WHERE slug = ?)',
      [slug],
    );
    for (const run of runs) expect(run.accepted).toBe(0);
    expect(fs.existsSync(path.join(path.dirname(app.dataDir), 'etc'))).toBe(false);
    expect(app.process.exitCode).toBeNull();
  });

  test('drop folders: symlinked files and folders pointing outside are never read, odd file names are reported verbatim', async () => {
    const secretCsv = path.join(outside, 'outside.csv');
    fs.writeFileSync(secretCsv, 'time,value\n2024-01-01T00:00:00Z,1\n2024-01-02T00:00:00Z,2\n');
    const folder = path.join(app.dataDir, 'drops', slug);
    fs.mkdirSync(folder, { recursive: true });
    fs.symlinkSync(secretCsv, path.join(folder, 'linked.csv'));
    fs.symlinkSync(outside, path.join(app.dataDir, 'drops', 'corpus-1'));
    fs.mkdirSync(path.join(app.dataDir, 'drops', '..%2f..'), { recursive: true });
    fs.writeFileSync(path.join(app.dataDir, 'drops', '..%2f..', 'escape.csv'), 'time,value\n2024-01-01T00:00:00Z,1\n');
    const oddName = `'; DROP TABLE observations; -- <b onmouseover=alert(1)>x.csv`;
    fs.writeFileSync(path.join(folder, oddName), 'time,value\nnot-a-time,1\n');
    const before = await raw.tableCounts(BOOKKEEPING);

    const deadline = Date.now() + 30_000;
    let run: { file_name: string; status: string; message: string } | undefined;
    // The run is recorded as running first and finished in a second write, and the file is moved beside its report
    // only after that: wait for both.
    const moved = () => fs.existsSync(path.join(folder, 'rejected', oddName));
    while ((!run || run.status === 'running' || !moved()) && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 500));
      run = await raw.get('SELECT file_name, status, message FROM ingest_runs WHERE source = ? AND file_name = ?', ['drop', oddName]);
    }
    expect(run, app.output().slice(-2000)).toBeDefined();
    expect(run!.status).toBe('rejected');
    expect(fs.existsSync(path.join(folder, 'rejected', oddName))).toBe(true);
    // A few more passes: the links and the odd folder are still left alone.
    await new Promise((r) => setTimeout(r, 3000));
    expect(fs.lstatSync(path.join(folder, 'linked.csv')).isSymbolicLink()).toBe(true);
    expect(fs.readFileSync(secretCsv, 'utf8')).toContain('2024-01-02');
    expect(fs.readdirSync(outside)).toEqual(['outside.csv']);
    expect(fs.existsSync(path.join(app.dataDir, 'drops', '..%2f..', 'escape.csv'))).toBe(true);
    expect(await raw.count('ingest_runs', "source = 'drop' AND file_name IN ('linked.csv', 'outside.csv', 'escape.csv')")).toBe(0);
    expect(await raw.tableCounts(BOOKKEEPING)).toEqual(before);
  });

  test('SQL-looking and script text in names and notes is stored verbatim, returned as JSON text, and escaped on pages', async () => {
    const before = await raw.tableCounts(BOOKKEEPING);
    const created = ok(
      await lead.json('/api/series', 'POST', { slug: 'odd-names', name: SCRIPT_TEXT, site: SQL_TEXT, description: `${SQL_TEXT}\n${SCRIPT_TEXT}` }),
      201,
    );
    const record = await created.json();
    expect(record.name).toBe(SCRIPT_TEXT);
    expect(record.site).toBe(SQL_TEXT);
    const stored = await raw.get<{ name: string; site: string }>('SELECT name, site FROM series WHERE slug = ?', ['odd-names']);
    expect(stored).toEqual({ name: SCRIPT_TEXT, site: SQL_TEXT });

    // An alert to write a note on, as the analysis job would leave it.
    const seriesId = record.id as number;
    await raw.exec(`INSERT INTO analysis_snapshots (series_id, settings, summary, status, n, created_at, updated_at)
                    VALUES (${seriesId}, '{}', '{}', 'ok', 0, '2024-01-01 00:00:00.000 +00:00', '2024-01-01 00:00:00.000 +00:00')`);
    const snapshot = (await raw.get<{ id: number }>('SELECT MAX(id) AS id FROM analysis_snapshots'))!.id;
    await raw.exec(`INSERT INTO alert_rules (series_id, indicator, min_tau, persistence, severity, quiet_period_hours, active, level_direction, created_at, updated_at)
                    VALUES (${seriesId}, 'ac1', 0.3, 1, 'watch', 0, TRUE, 'above', '2024-01-01 00:00:00.000 +00:00', '2024-01-01 00:00:00.000 +00:00')`);
    const rule = (await raw.get<{ id: number }>('SELECT MAX(id) AS id FROM alert_rules'))!.id;
    await raw.exec(`INSERT INTO alerts (series_id, rule_id, state, severity, first_snapshot_id, latest_snapshot_id, evaluation_count, peak_tau, version, created_at, updated_at)
                    VALUES (${seriesId}, ${rule}, 'new', 'watch', ${snapshot}, ${snapshot}, 1, 0.5, 1, '2024-01-01 00:00:00.000 +00:00', '2024-01-01 00:00:00.000 +00:00')`);
    const alertId = (await raw.get<{ id: number }>('SELECT MAX(id) AS id FROM alerts'))!.id;
    const note = await ok(await analyst.json(`/api/alerts/${alertId}/notes`, 'POST', { body: `${SCRIPT_TEXT} ${SQL_TEXT}` }), 201).json();
    expect(note.body).toBe(`${SCRIPT_TEXT} ${SQL_TEXT}`);
    expect(await raw.get('SELECT body FROM notes WHERE id = ?', [note.id])).toEqual({ body: `${SCRIPT_TEXT} ${SQL_TEXT}` });

    // Exactly the rows asked for were added; every table the SQL text names is intact.
    const after = await raw.tableCounts(BOOKKEEPING);
    const grew = Object.fromEntries(
      Object.keys(after)
        .filter((t) => after[t] !== before[t])
        .map((t) => [t, after[t] - before[t]]),
    );
    // The series names a site not known yet, which creates it (its name kept verbatim as well).
    expect(grew).toEqual(expect.objectContaining({ series: 1, sites: 1, notes: 1, alerts: 1, alert_rules: 1, analysis_snapshots: 1 }));
    expect(await raw.get('SELECT name FROM sites WHERE name = ?', [SQL_TEXT])).toEqual({ name: SQL_TEXT });
    for (const table of Object.keys(grew))
      expect(['series', 'sites', 'notes', 'alerts', 'alert_rules', 'analysis_snapshots', 'settings_changes', 'note_revisions']).toContain(table);
    expect(await raw.count('users')).toBe(4);

    // HTML: the text appears escaped; no element the text tried to inject exists.
    for (const page of ['/series/odd-names', `/alerts/${alertId}`, '/']) {
      const response = await lead.fetch(page);
      expect(response.status, page).toBe(200);
      const html = await response.text();
      expect(html, page).not.toContain('<script>window.__pwned');
      expect(html, page).not.toContain('<img src=x');
      if (page !== '/') expect(html, page).toMatch(/&lt;script&gt;window\.__pwned = 1&lt;\/script&gt;|\\u003cscript\\u003ewindow\.__pwned/);
    }
  });
});
