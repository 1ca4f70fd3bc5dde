import { createElement as h } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { PageError } from '@/components/PageError';
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
