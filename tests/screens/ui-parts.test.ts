import { createElement as h, type SelectHTMLAttributes } from 'react';
import { renderToStaticMarkup } from 'react-dom/server';
import { describe, expect, it } from 'vitest';
import { Button } from '@/components/ui/Button';
import { DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { Pager, pageCount } from '@/components/ui/Pager';
import { TimeChart } from '@/components/charts/TimeChart';

describe('shared UI parts (rendered on the server)', () => {
  it("ties a field error to its control without putting it into the control's name", () => {
    // WAI-ARIA 1.2: aria-describedby names the description, aria-invalid marks the value as not accepted; the
    // label's own words stay the accessible name, so tests and screen readers find the field by them alone
    const html = renderToStaticMarkup(h(Field, { label: 'Current password', error: 'Wrong password.', children: h('input', { className: CONTROL }) }));
    const label = /<label[^>]*>(.*?)<\/label>/.exec(html)![1];
    expect(label.replace(/<[^>]+>/g, '')).toBe('Current password');
    const describedBy = /aria-describedby="([^"]+)"/.exec(html)![1];
    expect(html).toContain(`id="${describedBy}"`);
    expect(html).toContain('aria-invalid="true"');
    expect(html).toContain('Wrong password.');
  });

  it('leaves a field without hint or error as a bare label around its control', () => {
    const html = renderToStaticMarkup(
      h(Field, { label: 'Sort', tone: 'filter', children: h('select', { className: CONTROL } as SelectHTMLAttributes<HTMLSelectElement>) }),
    );
    expect(html.startsWith('<label')).toBe(true);
    expect(html).not.toContain('aria-describedby');
  });

  it('draws a table with its caption, headings (a silent one for screen readers only) and rows', () => {
    const html = renderToStaticMarkup(
      h(DataTable, {
        caption: 'Users',
        testId: 'users',
        columns: ['Name', { label: 'Actions', srOnly: true }],
        children: h('tr', null, h('td', null, 'Ada'), h('td', null)),
      }),
    );
    expect(html).toContain('<caption class="sr-only">Users</caption>');
    expect(html).toContain('data-testid="users"');
    expect(html).toContain('<span class="sr-only">Actions</span>');
    expect(html).toContain('<td>Ada</td>');
  });

  it('pages with the first and last page buttons disabled at the ends', () => {
    expect(pageCount(0, 25)).toBe(1);
    expect(pageCount(51, 25)).toBe(3);
    const first = renderToStaticMarkup(h(Pager, { label: 'Pages', page: 1, pages: 3, onPage: () => {} }));
    expect(first).toContain('aria-label="Pages"');
    expect(first).toContain('Page 1 of 3');
    expect(first.match(/disabled=""/g)).toHaveLength(1);
  });

  it('makes buttons plain buttons unless told to submit', () => {
    expect(renderToStaticMarkup(h(Button, null, 'Cancel'))).toContain('type="button"');
    expect(renderToStaticMarkup(h(Button, { type: 'submit', variant: 'primary' }, 'Save'))).toContain('type="submit"');
  });

  it('renders a time chart on the server (theme colours as CSS variables until the browser resolves them)', () => {
    const html = renderToStaticMarkup(
      h(TimeChart, {
        rows: [
          { t: 0, v: 1 },
          { t: 30 * 86_400_000, v: 2 },
        ],
        lines: [{ key: 'v', label: 'value', color: 'tide' }],
        timeZone: 'UTC',
        marks: [{ at: 20 * 86_400_000, note: 'marked' }],
        windowBand: { from: 20 * 86_400_000, to: 30 * 86_400_000 },
      }),
    );
    expect(html).toContain('recharts-responsive-container');
  });
});
