'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState, type FormEvent } from 'react';
import { api } from '@/components/api';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { ErrorNote } from '@/components/States';
import { failureText, fieldError, TimeZoneInput } from '@/components/series-forms/form-parts';
import { suggestSlug } from '@/lib/schemas/series';
import type { SiteRecord } from '@/lib/schemas/site';

const BLANK = { name: '', slug: '', latitude: '', longitude: '', timeZone: 'UTC', description: '', notes: '' };

/** A coordinate box's text as the API takes it: empty = none, a comma read as the decimal sign. */
function coordinate(text: string): number | null {
  const trimmed = text.trim().replace(',', '.');
  return trimmed === '' ? null : Number(trimmed);
}

/**
 * Adds a site (no `site` given) or edits one. The slug follows the name until it is edited, and stays fixed once
 * the site exists (its address). Leads only; the server refuses others anyway.
 */
export function SiteForm({ site }: { site?: SiteRecord }) {
  const router = useRouter();
  const [form, setForm] = useState(
    site ? { ...BLANK, ...site, latitude: site.latitude?.toString() ?? '', longitude: site.longitude?.toString() ?? '' } : BLANK,
  );
  const [slugEdited, setSlugEdited] = useState(false);
  const save = useMutation({
    mutationFn: () => {
      const body = {
        name: form.name,
        latitude: coordinate(form.latitude),
        longitude: coordinate(form.longitude),
        timeZone: form.timeZone,
        description: form.description,
        notes: form.notes,
      };
      return site
        ? api<SiteRecord>(`/api/sites/${site.slug}`, { method: 'PATCH', body })
        : api<SiteRecord>('/api/sites', { method: 'POST', body: { ...body, slug: form.slug } });
    },
    onSuccess: (saved) => {
      if (site) router.refresh();
      else router.push(`/sites/${saved.slug}`);
    },
  });
  const set = (key: keyof typeof BLANK) => (value: string) =>
    setForm((current) => ({
      ...current,
      [key]: value,
      ...(key === 'name' && !site && !slugEdited ? { slug: suggestSlug(value) } : {}),
    }));
  const error = (key: string) => fieldError(save.error, key);

  function submit(event: FormEvent) {
    event.preventDefault();
    save.mutate();
  }

  return (
    <form onSubmit={submit} aria-label={site ? 'Edit the site' : 'Add a site'} className="grid grid-cols-1 gap-3 sm:grid-cols-2" data-testid="site-form">
      <Field label="Name" error={error('name')}>
        <input required value={form.name} onChange={(e) => set('name')(e.target.value)} className={`${CONTROL} w-full`} />
      </Field>
      {site ? null : (
        <Field label="Slug" hint="The site's address, suggested from the name." error={error('slug')}>
          <input
            required
            value={form.slug}
            onChange={(e) => {
              setSlugEdited(true);
              set('slug')(e.target.value);
            }}
            className={`${CONTROL} w-full font-mono`}
          />
        </Field>
      )}
      <Field label="Latitude" hint="Decimal degrees, north positive (WGS 84); leave both empty when unknown." error={error('latitude')}>
        <input inputMode="decimal" value={form.latitude} onChange={(e) => set('latitude')(e.target.value)} className={`${CONTROL} w-full`} />
      </Field>
      <Field label="Longitude" hint="Decimal degrees, east positive." error={error('longitude')}>
        <input inputMode="decimal" value={form.longitude} onChange={(e) => set('longitude')(e.target.value)} className={`${CONTROL} w-full`} />
      </Field>
      <Field label="Time zone" hint="IANA name, e.g. Europe/Oslo; new series of this site start with it." error={error('timeZone')}>
        <TimeZoneInput id="site-zone" value={form.timeZone} onChange={set('timeZone')} />
      </Field>
      <Field label="Description" error={error('description')} className="sm:col-span-2">
        <textarea rows={2} value={form.description} onChange={(e) => set('description')(e.target.value)} className={`${CONTROL} w-full`} />
      </Field>
      <Field label="Notes" hint="Access, instruments, contacts: what the team should know." error={error('notes')} className="sm:col-span-2">
        <textarea rows={2} value={form.notes} onChange={(e) => set('notes')(e.target.value)} className={`${CONTROL} w-full`} />
      </Field>
      <div className="flex flex-wrap items-center gap-3 sm:col-span-2">
        <Button type="submit" variant="primary" disabled={save.isPending}>
          {save.isPending ? 'Saving…' : site ? 'Save the site' : 'Add the site'}
        </Button>
        {save.isSuccess && site ? (
          <span role="status" className="text-sm text-calm">
            ✓ Saved
          </span>
        ) : null}
      </div>
      {save.isError ? (
        <div className="sm:col-span-2">
          <ErrorNote>
            {site ? 'Not saved.' : 'Not added.'} {failureText(save.error)}
          </ErrorNote>
        </div>
      ) : null}
    </form>
  );
}
