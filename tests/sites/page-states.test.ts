import { createElement as h } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { PageError } from '@/components/PageError';
import { SiteIndicators } from '@/components/sites/SiteIndicators';
import { formatP } from '@/lib/display/format';
import type { SiteAnalysisView } from '@/lib/sites/analysis-shape';
import { SiteMap } from '@/components/sites/SiteMap';
import { siteMap } from '@/lib/sites/map';

describe('the error page', () => {
  it("gives the server log's reference for a server failure, never its message or stack", () => {
    const error = Object.assign(new Error('SQLITE_CORRUPT at /data/brinkwatch.sqlite'), { digest: '2718281828' });
    const html = renderToStaticMarkup(h(PageError, { error, reset: () => undefined }));
    expect(html).toContain('reference 2718281828');
    expect(html).not.toContain('SQLITE_CORRUPT');
    expect(html).not.toContain(error.stack!.split('\n')[1].trim());
  });

  it('says what failed in the browser, by its message alone', () => {
    const error = new Error('Cannot draw the chart');
    const html = renderToStaticMarkup(h(PageError, { error, reset: () => undefined }));
    expect(html).toContain('Cannot draw the chart');
    expect(html).not.toContain(error.stack!.split('\n')[1].trim());
  });
});

describe('the sites map', () => {
  it('draws one linked dot per placed site, a scale bar, and names the sites without a position', () => {
    const html = renderToStaticMarkup(
      h(SiteMap, {
        map: siteMap([
          { slug: 'north', name: 'North', latitude: 60, longitude: 10 },
          { slug: 'south', name: 'South', latitude: 59.5, longitude: 10.2 },
          { slug: 'lost', name: 'Lost', latitude: null, longitude: null },
        ]),
      }),
    );
    expect(html.match(/<circle/g)).toHaveLength(2);
    expect(html).toContain('href="/sites/north"');
    expect(html).toMatch(/Scale bar: \d+ km/);
    expect(html).toContain('Without a position: Lost.');
  });
});

describe('the site-level indicators panel', () => {
  // Renders what the server computed (lib/sites/analysis.ts), in each of its states; the wording is the product's own.
  const render = (initial: SiteAnalysisView) =>
    renderToStaticMarkup(h(QueryClientProvider, { client: new QueryClient() }, h(SiteIndicators, { slug: 'mooring', timeZone: 'UTC', initial })));
  const none: SiteAnalysisView = {
    state: 'none',
    computedAt: null,
    error: null,
    members: { used: [], leftOut: [] },
    summary: null,
    curves: null,
    dataFrom: null,
    dataTo: null,
  };
  const member = (slug: string) => ({ seriesId: slug.length, slug, name: slug.toUpperCase(), unit: '' });

  it('says it is not computed yet when there is no snapshot', () => {
    expect(render(none)).toContain('Not computed yet');
  });

  it('gives the reason when the computation could not run, and the series left out', () => {
    const html = render({
      ...none,
      state: 'error',
      error: 'the series of this site have no stretch of time in common',
      members: { used: [], leftOut: [{ ...member('spot'), reason: 'no readings yet' }] },
    });
    expect(html).toContain('data-testid="site-indicators-error"');
    expect(html).toContain('no stretch of time in common');
    expect(html).toContain('SPOT</a> (no readings yet)');
  });

  it('lists each indicator with tau, direction and surrogate p, and a chart for each', () => {
    const kendall = { tau: 0.41, p: 0.001, direction: 'rising' as const };
    const html = render({
      ...none,
      state: 'ok',
      computedAt: '2026-01-01T00:00:00.000Z',
      members: { used: [member('upper'), member('lower')], leftOut: [] },
      summary: {
        n: 300,
        windowPoints: 75,
        evaluatedEvery: 3,
        interval: 7_200_000,
        dropped: 0,
        kendall: { 'pc1-variance': kendall, 'pc1-share': { ...kendall, tau: -0.1 }, 'maf-ac1': kendall },
        significance: { 'pc1-variance': { p: 0.02, count: 19, method: 'phase', direction: 'rising' } },
        latest: { 'pc1-variance': 1.5, 'pc1-share': 0.7, 'maf-ac1': 0.8 },
      },
      curves: { time: [0, 1], indicators: { 'pc1-variance': [1, 2], 'pc1-share': [0.5, 0.6], 'maf-ac1': [0.7, 0.8] } },
      dataFrom: 0,
      dataTo: 1,
    });
    for (const name of ['pc1-variance', 'pc1-share', 'maf-ac1']) {
      expect(html).toContain(`data-testid="site-row-${name}"`);
      expect(html).toContain(`data-testid="site-chart-${name}"`);
    }
    expect(html).toContain('0.020 (19 phase surrogates)'.replace('0.020', formatP(0.02)));
    expect(html).toContain('tested');
    expect(html).toContain('no surrogates');
    expect(html).toContain('one window in 3 evaluated');
  });
});
