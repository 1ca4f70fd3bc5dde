'use client';

import Link from 'next/link';
import { useState, type FormEvent } from 'react';
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { ApiError, api } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { ReasonField } from '@/components/ui/ReasonField';
import { formatTauDirection, indicatorLabel } from '@/lib/display/analysis-labels';
import { formatP } from '@/lib/display/format';
import { tauThreshold } from '@/lib/alerts/wording';
import { SITE_INDICATORS } from '@/lib/engine/site';
import type { SiteRuleStatus } from '@/lib/alerts/site-rules';

const STANDING_WORDS: Record<SiteRuleStatus['standing'], string> = {
  met: 'met',
  building: 'met, building to its persistence',
  'not-met': 'not met',
  'cannot-judge': 'could not be judged',
  'not-yet-judged': 'not judged yet',
};

/**
 * The rules on a site's site-level indicators with how each stands on the latest site analysis, and for leads a
 * form to add one and a switch to pause or resume it. A met rule opens an alert on the site, triaged as any other.
 */
export function SiteRules({ slug, canEdit, initial }: { slug: string; canEdit: boolean; initial: SiteRuleStatus[] }) {
  const client = useQueryClient();
  const query = useQuery({
    queryKey: ['site-rules', slug],
    queryFn: ({ signal }) => api<{ items: SiteRuleStatus[] }>(`/api/sites/${slug}/rules`, { signal }).then((r) => r.items),
    initialData: initial,
    refetchInterval: 60_000,
  });
  const toggle = useMutation({
    mutationFn: (rule: SiteRuleStatus['rule']) =>
      api(`/api/rules/${rule.id}`, {
        method: 'PATCH',
        body: { active: !rule.active, reason: rule.active ? 'paused on the site page' : 'resumed on the site page' },
      }),
    onSuccess: () => client.invalidateQueries({ queryKey: ['site-rules', slug] }),
  });
  if (query.isPending) return <Loading label="Loading the site rules…" />;
  if (query.isError) return <ErrorNote error={query.error}>The site rules could not be loaded.</ErrorNote>;
  const rules = query.data;
  return (
    <div className="space-y-3">
      {rules.length === 0 ? (
        <Empty>No rules on this site&apos;s indicators yet.{canEdit ? ' Add one below.' : ' A lead can add one.'}</Empty>
      ) : (
        <DataTable caption="Rules on the site-level indicators" frame="plain" testId="site-rules" columns={['Rule', 'Latest judgement', 'Open alert', '']}>
          {rules.map(({ rule, standing, latest, openAlert }) => (
            <tr key={rule.id} data-testid={`site-rule-${rule.id}`}>
              <td className={CELL}>
                {indicatorLabel(rule.indicator, 'title')}: {tauThreshold(rule.minTau, rule.direction)}
                {rule.maxSurrogateP !== null ? `, surrogate p ≤ ${formatP(rule.maxSurrogateP)}` : ''}
                {rule.persistence > 1 ? `, ${rule.persistence} analyses in a row` : ''} ({rule.severity}){rule.active ? '' : ' — paused'}
              </td>
              <td className={CELL} data-testid="site-rule-standing">
                {STANDING_WORDS[standing]}
                {latest && latest.tau !== null ? ` (${formatTauDirection(latest.tau, 'rising')}, surrogate p ${formatP(latest.surrogateP)})` : ''}
                {latest && standing === 'cannot-judge' ? `: ${latest.outcome.replace(/^cannot-judge: /, '')}` : ''}
              </td>
              <td className={CELL}>
                {openAlert ? (
                  <Link href={`/alerts/${openAlert.id}`} className="text-tide hover:underline">
                    #{openAlert.id} ({openAlert.state})
                  </Link>
                ) : (
                  'none'
                )}
              </td>
              <td className={CELL}>
                {canEdit ? (
                  <Button size="sm" onClick={() => toggle.mutate(rule)} disabled={toggle.isPending}>
                    {rule.active ? 'Pause' : 'Resume'}
                  </Button>
                ) : null}
              </td>
            </tr>
          ))}
        </DataTable>
      )}
      {toggle.isError ? <ErrorNote error={toggle.error}>The rule could not be changed.</ErrorNote> : null}
      {canEdit ? <NewSiteRule slug={slug} onAdded={() => client.invalidateQueries({ queryKey: ['site-rules', slug] })} /> : null}
    </div>
  );
}

function NewSiteRule({ slug, onAdded }: { slug: string; onAdded: () => void }) {
  const [indicator, setIndicator] = useState<string>(SITE_INDICATORS[0].name);
  const [minTau, setMinTau] = useState('0.5');
  const [maxSurrogateP, setMaxSurrogateP] = useState('0.05');
  const [persistence, setPersistence] = useState('1');
  const [severity, setSeverity] = useState<'watch' | 'warning'>('watch');
  const [reason, setReason] = useState('');
  const add = useMutation({
    mutationFn: () =>
      api(`/api/sites/${slug}/rules`, {
        method: 'POST',
        body: {
          indicator,
          minTau: Number(minTau),
          maxSurrogateP: maxSurrogateP.trim() === '' ? null : Number(maxSurrogateP),
          persistence: Number(persistence),
          severity,
          ...(reason.trim() ? { reason: reason.trim() } : {}),
        },
      }),
    onSuccess: () => {
      setReason('');
      onAdded();
    },
  });
  const fields = add.error instanceof ApiError ? (add.error.fields ?? {}) : {};
  const submit = (event: FormEvent) => {
    event.preventDefault();
    add.mutate();
  };
  return (
    <form onSubmit={submit} className="grid grid-cols-2 gap-3 border-t border-rule pt-3 sm:grid-cols-5" data-testid="site-rule-form">
      <Field label="Indicator" error={fields.indicator?.[0]}>
        <select value={indicator} onChange={(e) => setIndicator(e.target.value)} className={CONTROL} data-testid="site-rule-indicator">
          {SITE_INDICATORS.map((d) => (
            <option key={d.name} value={d.name}>
              {indicatorLabel(d.name, 'title')}
            </option>
          ))}
        </select>
      </Field>
      <Field label="Kendall τ at least (rising)" error={fields.minTau?.[0]}>
        <input type="number" step="0.05" min="-1" max="1" value={minTau} onChange={(e) => setMinTau(e.target.value)} className={CONTROL} required />
      </Field>
      <Field label="Surrogate p at most" hint="Leave empty not to test it." error={fields.maxSurrogateP?.[0]}>
        <input type="number" step="0.005" min="0" max="1" value={maxSurrogateP} onChange={(e) => setMaxSurrogateP(e.target.value)} className={CONTROL} />
      </Field>
      <Field label="Analyses in a row" error={fields.persistence?.[0]}>
        <input type="number" step="1" min="1" max="100" value={persistence} onChange={(e) => setPersistence(e.target.value)} className={CONTROL} required />
      </Field>
      <Field label="Severity" error={fields.severity?.[0]}>
        <select value={severity} onChange={(e) => setSeverity(e.target.value as 'watch' | 'warning')} className={CONTROL}>
          <option value="watch">watch</option>
          <option value="warning">warning</option>
        </select>
      </Field>
      <ReasonField value={reason} onChange={setReason} required={false} error={fields.reason?.[0]} className="col-span-2 sm:col-span-4" />
      <div className="flex items-end">
        <Button type="submit" variant="primary" disabled={add.isPending}>
          {add.isPending ? 'Adding…' : 'Add the rule'}
        </Button>
      </div>
      {add.isError && !Object.keys(fields).length ? (
        <div className="col-span-full">
          <ErrorNote error={add.error}>The rule could not be added.</ErrorNote>
        </div>
      ) : null}
    </form>
  );
}
