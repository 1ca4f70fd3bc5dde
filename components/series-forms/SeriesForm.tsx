'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState, type FormEvent, type ReactNode } from 'react';
import { api } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { ReasonField, reasonBody } from '@/components/ui/ReasonField';
import { INDICATORS } from '@/lib/engine/indicators';
import { MAX_EVALUATED_WINDOWS } from '@/lib/engine/settings';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { TIME_FORMAT_LABELS } from '@/lib/intake/choices';
import { LIVE_SETTINGS_DEFAULTS, TIME_FORMATS, suggestSlug } from '@/lib/schemas/series';
import type { SeriesRecord } from '@/lib/series/registry';
import type { SiteRecord } from '@/lib/schemas/site';
import { failureText, fieldError, TimeZoneInput } from './form-parts';

const UNITS = { seconds: 1000, minutes: 60_000, hours: 3_600_000, days: 86_400_000 } as const;
type IntervalUnit = keyof typeof UNITS | 'irregular';

/** A stored interval as count and the largest unit that divides it. */
function intervalParts(ms: number | null): { count: string; unit: IntervalUnit } {
  if (ms === null) return { count: '', unit: 'irregular' };
  const unit = (['days', 'hours', 'minutes', 'seconds'] as const).find((u) => ms % UNITS[u] === 0) ?? 'seconds';
  return { count: String(ms / UNITS[unit]), unit };
}

/** A column box: digits are a 0-based position, anything else a header name. */
const column = (text: string) => (/^\d+$/.test(text.trim()) ? Number(text.trim()) : text.trim());
/** An extent box: a number is a fraction of the analysed stretch, else "<n> points" or an ISO 8601 duration. */
const extent = (text: string) => (text.trim() !== '' && Number.isFinite(Number(text)) ? Number(text) : text.trim());

/** What a setting the form offers is when a series has not set it: the live defaults, else the engine's. */
const FORM_DEFAULTS = { ...LIVE_SETTINGS_DEFAULTS, maxEvaluatedWindows: MAX_EVALUATED_WINDOWS };

/** The indicators computed from each window's residuals, which the stride setting thins. */
const COSTLY_INDICATORS = INDICATORS.filter((d) => d.kind === 'window')
  .map((d) => indicatorLabel(d.name))
  .join(', ');

/** The analysis settings the form offers, each with what its default means. The rest keep their stored values. */
const SETTINGS_HELP: { key: 'window' | 'bandwidth' | 'span' | 'surrogates' | 'minCoverage' | 'maxEvaluatedWindows'; label: string; help: string }[] = [
  {
    key: 'span',
    label: 'Span analysed',
    help: `Default ${LIVE_SETTINGS_DEFAULTS.span}: only the latest 1,000 sampling intervals are judged, so windows stop growing with the record. Also a fraction of the record or an ISO 8601 duration (P5Y); empty for the whole record.`,
  },
  {
    key: 'window',
    label: 'Rolling window',
    help: `Default ${LIVE_SETTINGS_DEFAULTS.window}: half of the analysed stretch. Also "<n> points" or a duration such as P90D.`,
  },
  {
    key: 'bandwidth',
    label: 'Detrending bandwidth',
    help: `Default ${LIVE_SETTINGS_DEFAULTS.bandwidth}: the smoother's width as a tenth of the stretch; wider keeps slower changes in the residuals.`,
  },
  {
    key: 'surrogates',
    label: 'Surrogate series',
    help: `Default ${LIVE_SETTINGS_DEFAULTS.surrogates}: a surrogate p is at least 1/(N + 1); networks judged together with a false-discovery rule need more (about series ÷ q).`,
  },
  {
    key: 'minCoverage',
    label: 'Least coverage of a window',
    help: `Default ${LIVE_SETTINGS_DEFAULTS.minCoverage}: windows with less than 80 % observed (not filled) points are not judged.`,
  },
  {
    key: 'maxEvaluatedWindows',
    label: 'Most windows per costly indicator',
    help: `Default ${MAX_EVALUATED_WINDOWS} (10 to 1,000,000): ${COSTLY_INDICATORS} are computed at no more than this many evenly spaced windows (always the latest), and their Kendall tau is taken over those. More windows cost more time per analysis; backtests replay at the same spacing.`,
  },
];

export interface SeriesFormProps {
  sites: SiteRecord[];
  /** the series being edited; none to register a new one */
  series?: SeriesRecord;
  /** the site picked at first on a new series (from the site page's link) */
  initialSiteId?: number | null;
}

function Section({ title, children }: { title: string; children: ReactNode }) {
  return (
    <fieldset className="grid grid-cols-1 gap-3 rounded-lg border border-rule bg-card p-4 sm:grid-cols-2">
      <legend className="px-1 text-base font-semibold">{title}</legend>
      {children}
    </fieldset>
  );
}

/**
 * Registers a series or edits one, through `POST /api/series` or `PATCH /api/series/{slug}` (the one schema,
 * `seriesFieldsSchema`, checks every field there; its field errors show beside the fields here).
 */
export function SeriesForm({ sites, series, initialSiteId = null }: SeriesFormProps) {
  const router = useRouter();
  const settings = (series?.settings ?? LIVE_SETTINGS_DEFAULTS) as Record<string, unknown>;
  const interval = intervalParts(series ? series.intervalMs : 86_400_000);
  const startSite = sites.find((s) => s.id === (series ? series.siteId : initialSiteId));
  const [initialForm] = useState(() => ({
    name: series?.name ?? '',
    slug: series?.slug ?? '',
    site: startSite ? String(startSite.id) : '',
    newSite: '',
    unit: series?.unit ?? '',
    description: series?.description ?? '',
    intervalCount: interval.count,
    intervalUnit: interval.unit,
    timeZone: series?.timeZone ?? startSite?.timeZone ?? 'UTC',
    timeColumn: String(series?.csvMapping.timeColumn ?? 0),
    valueColumn: String(series?.csvMapping.valueColumn ?? 1),
    timeFormat: series?.csvMapping.timeFormat ?? 'iso8601',
    variable: series?.csvMapping.variable ?? '',
    duplicatePolicy: series?.duplicatePolicy ?? 'reject',
    // A stored null (a span of the whole record) shows as an empty box, and is sent back as null.
    ...(Object.fromEntries(SETTINGS_HELP.map(({ key }) => [key, key in settings ? String(settings[key] ?? '') : String(FORM_DEFAULTS[key])])) as Record<
      (typeof SETTINGS_HELP)[number]['key'],
      string
    >),
  }));
  const [form, setForm] = useState(initialForm);
  const [reason, setReason] = useState('');
  // Changing how an existing series is analysed needs a reason; renaming it or fixing its unit does not.
  const analysisChanged = Boolean(series) && SETTINGS_HELP.some(({ key }) => form[key] !== initialForm[key]);
  const [slugEdited, setSlugEdited] = useState(Boolean(series));
  const [zoneEdited, setZoneEdited] = useState(Boolean(series));
  type Key = keyof typeof form;
  const set = (key: Key) => (value: string) =>
    setForm((current) => {
      const next = { ...current, [key]: value };
      if (key === 'name' && !slugEdited) next.slug = suggestSlug(value);
      const site = key === 'site' ? sites.find((s) => String(s.id) === value) : undefined;
      if (site && !zoneEdited) next.timeZone = site.timeZone;
      return next;
    });

  const save = useMutation({
    mutationFn: () => {
      const body = {
        name: form.name,
        ...(form.site === 'new' ? { site: form.newSite } : { siteId: form.site ? Number(form.site) : null }),
        unit: form.unit,
        description: form.description,
        intervalMs: form.intervalUnit === 'irregular' ? null : Math.round(Number(form.intervalCount) * UNITS[form.intervalUnit]),
        timeZone: form.timeZone,
        // The form shows only some of the mapping (not the flag column or flag variable): keep the rest as stored.
        csvMapping: {
          ...series?.csvMapping,
          timeColumn: column(form.timeColumn),
          valueColumn: column(form.valueColumn),
          timeFormat: form.timeFormat,
          variable: form.variable.trim() || undefined,
        },
        duplicatePolicy: form.duplicatePolicy,
        // The API replaces settings whole: keep what the form does not show.
        settings: {
          ...settings,
          span: form.span.trim() === '' ? null : extent(form.span),
          window: extent(form.window),
          bandwidth: extent(form.bandwidth),
          surrogates: Number(form.surrogates),
          minCoverage: Number(form.minCoverage),
          maxEvaluatedWindows: Number(form.maxEvaluatedWindows),
        },
      };
      return series
        ? api<SeriesRecord>(`/api/series/${series.slug}`, { method: 'PATCH', body: { ...body, ...reasonBody(reason) } })
        : api<SeriesRecord>('/api/series', { method: 'POST', body: { ...body, slug: form.slug } });
    },
    onSuccess: (saved) => {
      setReason('');
      if (series) router.refresh();
      else router.push(`/series/${saved.slug}`);
    },
  });
  const error = (key: string) => fieldError(save.error, key);
  const text = (key: Key, props: { required?: boolean; className?: string; placeholder?: string } = {}) => (
    <input
      value={form[key]}
      onChange={(e) => set(key)(e.target.value)}
      required={props.required}
      placeholder={props.placeholder}
      className={`${CONTROL} w-full ${props.className ?? ''}`}
    />
  );

  function submit(event: FormEvent) {
    event.preventDefault();
    save.mutate();
  }

  return (
    <form onSubmit={submit} aria-label={series ? 'Series settings' : 'Register a series'} className="space-y-4" data-testid="series-form">
      <Section title="The series">
        <Field label="Name" error={error('name')}>
          {text('name', { required: true })}
        </Field>
        {series ? (
          <Field label="Slug" hint="Fixed once registered: drop folders, pushes and links use it.">
            <input value={form.slug} readOnly className={`${CONTROL} w-full font-mono text-ink-soft`} />
          </Field>
        ) : (
          <Field label="Slug" hint="Suggested from the name; the drop folder and the address use it." error={error('slug')}>
            <input
              value={form.slug}
              required
              onChange={(e) => {
                setSlugEdited(true);
                set('slug')(e.target.value);
              }}
              className={`${CONTROL} w-full font-mono`}
            />
          </Field>
        )}
        <Field label="Site" error={error('siteId') ?? error('site')}>
          <select value={form.site} onChange={(e) => set('site')(e.target.value)} className={`${CONTROL} w-full`}>
            <option value="">No site</option>
            {sites.map((site) => (
              <option key={site.id} value={site.id}>
                {site.name}
              </option>
            ))}
            <option value="new">A new site…</option>
          </select>
        </Field>
        {form.site === 'new' ? (
          <Field label="New site's name" hint="Created with the series; add its position on the Sites page.">
            {text('newSite', { required: true })}
          </Field>
        ) : null}
        <Field label="Unit" hint="e.g. °C, mg/L, m" error={error('unit')}>
          {text('unit')}
        </Field>
        <Field label="Description" error={error('description')} className="sm:col-span-2">
          <textarea rows={2} value={form.description} onChange={(e) => set('description')(e.target.value)} className={`${CONTROL} w-full`} />
        </Field>
      </Section>

      <Section title="Sampling and files">
        <Field
          label="Sampling interval"
          hint="How often a reading is due; late after three missed intervals. Irregular records are kept as they come."
          error={error('intervalMs')}
        >
          <span className="mt-1 flex gap-2">
            <input
              type="number"
              min={1}
              step="any"
              aria-label="Interval count"
              value={form.intervalCount}
              disabled={form.intervalUnit === 'irregular'}
              required={form.intervalUnit !== 'irregular'}
              onChange={(e) => set('intervalCount')(e.target.value)}
              className={`${CONTROL} mt-0 w-24`}
            />
            <select aria-label="Interval unit" value={form.intervalUnit} onChange={(e) => set('intervalUnit')(e.target.value)} className={`${CONTROL} mt-0`}>
              {Object.keys(UNITS).map((unit) => (
                <option key={unit} value={unit}>
                  {unit}
                </option>
              ))}
              <option value="irregular">irregular</option>
            </select>
          </span>
        </Field>
        <Field label="Time zone" hint="IANA name; times are shown and calendar ticks drawn in it." error={error('timeZone')}>
          <TimeZoneInput
            id="series-zone"
            value={form.timeZone}
            onChange={(zone) => {
              setZoneEdited(true);
              set('timeZone')(zone);
            }}
          />
        </Field>
        <Field label="Time column" hint="Header name, or position from 0." error={error('csvMapping.timeColumn')}>
          {text('timeColumn', { required: true })}
        </Field>
        <Field label="Value column" hint="Header name, or position from 0." error={error('csvMapping.valueColumn')}>
          {text('valueColumn', { required: true })}
        </Field>
        <Field label="Time format" error={error('csvMapping.timeFormat')}>
          <select value={form.timeFormat} onChange={(e) => set('timeFormat')(e.target.value)} className={`${CONTROL} w-full`}>
            {TIME_FORMATS.map((format) => (
              <option key={format} value={format}>
                {TIME_FORMAT_LABELS[format]}
              </option>
            ))}
          </select>
        </Field>
        <Field
          label="netCDF variable"
          hint="The variable a netCDF file feeds this series from; leave empty when its files hold one data variable."
          error={error('csvMapping.variable')}
        >
          {text('variable')}
        </Field>
        <Field
          label="A reading that is already stored"
          hint="Reject keeps the stored value and reports the row; replace takes the new one (for corrected files)."
          error={error('duplicatePolicy')}
        >
          <select value={form.duplicatePolicy} onChange={(e) => set('duplicatePolicy')(e.target.value)} className={`${CONTROL} w-full`}>
            <option value="reject">reject</option>
            <option value="replace">replace</option>
          </select>
        </Field>
      </Section>

      <Section title="Analysis">
        {SETTINGS_HELP.map(({ key, label, help }) => (
          <Field key={key} label={label} hint={help} error={error(`settings.${key}`)}>
            {text(key, { required: key !== 'span' })}
          </Field>
        ))}
        <p className="text-xs text-ink-soft sm:col-span-2">
          Every other setting (detrending, indicators, surrogate method, shift detection) keeps its default, or its saved value; analysts try settings on the
          series page before a lead saves them there.
        </p>
      </Section>

      {series ? <ReasonField value={reason} onChange={setReason} required={analysisChanged} error={error('reason')} /> : null}

      <div className="flex flex-wrap items-center gap-3">
        <Button type="submit" variant="primary" size="lg" disabled={save.isPending}>
          {save.isPending ? 'Saving…' : series ? 'Save the changes' : 'Register the series'}
        </Button>
        {save.isSuccess && series ? (
          <span role="status" className="text-sm text-calm">
            ✓ Saved
          </span>
        ) : null}
      </div>
      {save.isError ? (
        <ErrorNote>
          {series ? 'Not saved.' : 'Not registered.'} {failureText(save.error)}
        </ErrorNote>
      ) : null}
    </form>
  );
}
