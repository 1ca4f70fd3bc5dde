'use client';

import { keepPreviousData, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { ApiError, api } from '@/components/api';
import { ErrorNote, Loading } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { ReasonField, reasonBody } from '@/components/ui/ReasonField';
import { useDebounced } from '@/components/workbench/use-debounced';
import type { DraftPreview } from '@/lib/alerts/rule-preview';
import type { RuleRecord } from '@/lib/alerts/rules';
import type { RuleTemplate } from '@/lib/alerts/rule-templates';
import { DIRECTION_WORDS, indicatorLabel } from '@/lib/display/analysis-labels';
import { INDICATOR_DIRECTIONS, type RuleDirection } from '@/lib/engine/direction';
import type { IndicatorName } from '@/lib/engine/settings';
import type { RuleCreateInput } from '@/lib/schemas/rule';
import { RULE_FIELD_HELP } from './field-help';

/** A rule as the form holds it: numbers as typed (an empty box is "not tested"). */
export interface RuleDraft {
  indicator: IndicatorName;
  direction: RuleDirection;
  minTau: string;
  maxSurrogateP: string;
  levelThreshold: string;
  levelDirection: 'above' | 'below';
  persistence: string;
  severity: 'watch' | 'warning';
  quietPeriodHours: string;
  fdrLevel: string;
  active: boolean;
}

const text = (n: number | null | undefined) => (n === null || n === undefined ? '' : String(n));

/** The form's copy of a stored rule or a template. */
export function draftOf(rule: RuleCreateInput | RuleRecord): RuleDraft {
  return {
    indicator: rule.indicator as IndicatorName,
    direction: rule.direction ?? ownDirection(rule.indicator as IndicatorName),
    minTau: text(rule.minTau),
    maxSurrogateP: text(rule.maxSurrogateP),
    levelThreshold: text(rule.levelThreshold),
    levelDirection: rule.levelDirection ?? 'above',
    persistence: text(rule.persistence ?? 1),
    severity: rule.severity ?? 'watch',
    quietPeriodHours: text(rule.quietPeriodHours ?? 0),
    fdrLevel: text(rule.fdrLevel),
    active: rule.active ?? true,
  };
}

/** The indicator's own direction under slowing down, as a rule names it (the two-sided ones: either way). */
function ownDirection(indicator: IndicatorName): RuleDirection {
  const own = INDICATOR_DIRECTIONS[indicator];
  return own === 'two-sided' ? 'either' : own;
}

/** The body the API validates (lib/schemas/rule.ts); a box that is not a number is sent as typed, so the server names it. */
function bodyOf(d: RuleDraft): RuleCreateInput {
  const num = (s: string) => (s.trim() === '' ? null : Number.isFinite(Number(s)) ? Number(s) : (s as unknown as number));
  return {
    indicator: d.indicator,
    direction: d.direction,
    minTau: num(d.minTau) ?? 0,
    maxSurrogateP: num(d.maxSurrogateP),
    maxKendallP: null,
    levelThreshold: num(d.levelThreshold),
    levelDirection: d.levelDirection,
    persistence: num(d.persistence) ?? 1,
    severity: d.severity,
    quietPeriodHours: num(d.quietPeriodHours) ?? 0,
    fdrLevel: num(d.fdrLevel),
    active: d.active,
  };
}

const fieldError = (error: unknown, field: string) => (error instanceof ApiError ? (error.fields?.[field]?.join(' ') ?? null) : null);

/**
 * Writes or edits one rule of a series: every field with its plain-words explanation, templates to start from, a
 * live preview of what the draft says on the latest analysis (the server judges it exactly as the scheduler
 * would), and a backtest of the draft. A stored rule's draft is backtested as drafted while the rule stays as
 * saved; a new draft is first saved paused, since a backtest belongs to a rule.
 */
export function RuleEditor({
  slug,
  ruleId,
  initial,
  indicators,
  templates,
  onClose,
}: {
  slug: string;
  /** the stored rule being edited; null for a new one */
  ruleId: number | null;
  initial: RuleDraft;
  /** the indicators the series computes */
  indicators: IndicatorName[];
  templates: readonly RuleTemplate[];
  onClose: () => void;
}) {
  const router = useRouter();
  const client = useQueryClient();
  const [id, setId] = useState(ruleId);
  const [draft, setDraft] = useState(initial);
  const set = <K extends keyof RuleDraft>(key: K, value: RuleDraft[K]) => setDraft((d) => ({ ...d, [key]: value }));
  const body = bodyOf(draft);
  const debounced = useDebounced(body, 400);

  const preview = useQuery({
    queryKey: ['rule-preview', slug, id, debounced],
    queryFn: ({ signal }) => api<DraftPreview>(`/api/series/${slug}/rules/preview`, { method: 'POST', body: { rule: debounced, replacing: id }, signal }),
    placeholderData: keepPreviousData,
    staleTime: Infinity,
    retry: false,
  });
  const refresh = () => {
    void client.invalidateQueries({ queryKey: ['rules', slug] });
    router.refresh();
  };
  const [reason, setReason] = useState('');
  const save = useMutation({
    mutationFn: () => {
      const saved = { ...body, ...reasonBody(reason) };
      return id === null
        ? api<RuleRecord>(`/api/series/${slug}/rules`, { method: 'POST', body: saved })
        : api<RuleRecord>(`/api/rules/${id}`, { method: 'PATCH', body: saved });
    },
    onSuccess: () => {
      refresh();
      onClose();
    },
  });
  const backtest = useMutation({
    mutationFn: async () => {
      if (id !== null) return { ruleId: id, ...(await api<{ jobId: number }>(`/api/rules/${id}/backtest`, { method: 'POST', body: { draft: body } })) };
      const created = await api<RuleRecord>(`/api/series/${slug}/rules`, { method: 'POST', body: { ...body, active: false } });
      setId(created.id);
      set('active', false);
      return { ruleId: created.id, ...(await api<{ jobId: number }>(`/api/rules/${created.id}/backtest`, { method: 'POST', body: {} })) };
    },
    onSuccess: () => {
      void client.invalidateQueries({ queryKey: ['backtests', slug] });
      refresh();
    },
  });
  const error = save.error ?? backtest.error ?? preview.error;
  // The server's answer to a save wins; before one, the preview says what a save would refuse.
  const refused = preview.data?.refused ?? {};
  const errorOf = (field: string) => fieldError(error, field) ?? refused[field]?.join(' ') ?? null;

  return (
    <form
      className="mt-3 space-y-4 rounded-lg border border-tide/40 bg-paper p-4"
      data-testid="rule-editor"
      onSubmit={(e) => {
        e.preventDefault();
        save.mutate();
      }}
    >
      <div className="flex flex-wrap items-end gap-3">
        <h3 className="text-sm font-semibold">{id === null ? 'New rule' : `Editing rule #${id}`}</h3>
        <Field label="Start from a template" tone="filter" className="ml-auto">
          <select
            className={CONTROL}
            value=""
            data-testid="rule-template"
            onChange={(e) => {
              const template = templates.find((t) => t.key === e.target.value);
              if (template) setDraft(draftOf(template.rule));
            }}
          >
            <option value="">Choose…</option>
            {templates.map((t) => (
              <option key={t.key} value={t.key} title={t.summary}>
                {t.title}
              </option>
            ))}
          </select>
        </Field>
      </div>

      <div className="grid grid-cols-1 gap-4 md:grid-cols-2">
        <Field label="Indicator" hint={RULE_FIELD_HELP.indicator} error={errorOf('indicator')}>
          <select
            className={CONTROL}
            value={draft.indicator}
            data-testid="rule-indicator"
            onChange={(e) => {
              const indicator = e.target.value as IndicatorName;
              setDraft((d) => ({ ...d, indicator, direction: ownDirection(indicator) }));
            }}
          >
            {(indicators.includes(draft.indicator) ? indicators : [...indicators, draft.indicator]).map((name) => (
              <option key={name} value={name}>
                {indicatorLabel(name, 'title')}
              </option>
            ))}
          </select>
        </Field>
        <Field label="Direction of the trend" hint={RULE_FIELD_HELP.direction} error={errorOf('direction')}>
          <select className={CONTROL} value={draft.direction} onChange={(e) => set('direction', e.target.value as RuleDirection)}>
            {(['rising', 'falling', 'either'] as const).map((d) => (
              <option key={d} value={d}>
                {DIRECTION_WORDS[d]}
              </option>
            ))}
          </select>
        </Field>
        <Field label="Minimum trend (Kendall τ)" hint={RULE_FIELD_HELP.minTau} error={errorOf('minTau')}>
          <input className={CONTROL} inputMode="decimal" value={draft.minTau} onChange={(e) => set('minTau', e.target.value)} data-testid="rule-min-tau" />
        </Field>
        <Field label="Largest surrogate p" hint={RULE_FIELD_HELP.maxSurrogateP} error={errorOf('maxSurrogateP')}>
          <input
            className={CONTROL}
            inputMode="decimal"
            value={draft.maxSurrogateP}
            placeholder="not tested"
            onChange={(e) => set('maxSurrogateP', e.target.value)}
          />
        </Field>
        <div className="grid grid-cols-[minmax(0,1fr)_auto] gap-2">
          <Field label="Level of the latest value" hint={RULE_FIELD_HELP.levelThreshold} error={errorOf('levelThreshold')}>
            <input
              className={CONTROL}
              inputMode="decimal"
              value={draft.levelThreshold}
              placeholder="not tested"
              onChange={(e) => set('levelThreshold', e.target.value)}
            />
          </Field>
          <Field label="Must be">
            <select className={CONTROL} value={draft.levelDirection} onChange={(e) => set('levelDirection', e.target.value as 'above' | 'below')}>
              <option value="above">at or above</option>
              <option value="below">at or below</option>
            </select>
          </Field>
        </div>
        <Field label="Analyses in a row" hint={RULE_FIELD_HELP.persistence} error={errorOf('persistence')}>
          <input className={CONTROL} inputMode="numeric" value={draft.persistence} onChange={(e) => set('persistence', e.target.value)} />
        </Field>
        <Field label="Severity" hint={RULE_FIELD_HELP.severity} error={errorOf('severity')}>
          <select className={CONTROL} value={draft.severity} onChange={(e) => set('severity', e.target.value as 'watch' | 'warning')}>
            <option value="watch">watch</option>
            <option value="warning">warning</option>
          </select>
        </Field>
        <Field label="Quiet period after a decision (hours)" hint={RULE_FIELD_HELP.quietPeriodHours} error={errorOf('quietPeriodHours')}>
          <input className={CONTROL} inputMode="decimal" value={draft.quietPeriodHours} onChange={(e) => set('quietPeriodHours', e.target.value)} />
        </Field>
        <Field label="False-discovery level across all series" hint={RULE_FIELD_HELP.fdrLevel} error={errorOf('fdrLevel')}>
          <input className={CONTROL} inputMode="decimal" value={draft.fdrLevel} placeholder="not used" onChange={(e) => set('fdrLevel', e.target.value)} />
        </Field>
        <div>
          <label className="flex items-center gap-2 text-sm font-medium">
            <input type="checkbox" checked={draft.active} onChange={(e) => set('active', e.target.checked)} /> Judged (not paused)
          </label>
          <p className="mt-1 text-xs text-ink-soft">{RULE_FIELD_HELP.active}</p>
        </div>
      </div>

      <section aria-label="What this rule says now" className="rounded border border-rule bg-card p-3 text-sm" aria-live="polite">
        <h4 className="mb-1 font-semibold">What this rule says now</h4>
        <DraftVerdict preview={preview.data} loading={preview.isLoading} failed={preview.isError} />
        {preview.isFetching && !preview.isLoading ? <p className="text-xs text-ink-soft">Judging the draft…</p> : null}
      </section>

      {/* Editing a stored rule changes a threshold someone relied on: say why. A new rule may say why it exists. */}
      <ReasonField value={reason} onChange={setReason} required={ruleId !== null} error={errorOf('reason')} />

      {refused._ ? <ErrorNote>{refused._.join(' ')}</ErrorNote> : null}
      {error ? <ErrorNote error={error}>{error === preview.error ? 'This draft is not a valid rule yet.' : 'Not done.'}</ErrorNote> : null}
      {backtest.data ? (
        <p role="status" className="text-sm text-calm" data-testid="rule-backtest-started">
          ✓ Backtest #{backtest.data.jobId} of {ruleId === null ? `rule #${backtest.data.ruleId} (saved paused)` : 'this draft'} queued; follow it in the{' '}
          <a className="text-tide underline" href="#backtest">
            Backtest
          </a>{' '}
          panel.
        </p>
      ) : null}
      <div className="flex flex-wrap gap-2">
        <Button type="submit" variant="primary" disabled={save.isPending}>
          {save.isPending ? 'Saving…' : 'Save rule'}
        </Button>
        <Button onClick={() => backtest.mutate()} disabled={backtest.isPending} data-testid="rule-backtest">
          {backtest.isPending ? 'Queuing…' : id === null ? 'Save paused and backtest' : 'Backtest this draft'}
        </Button>
        <Button variant="quiet" onClick={onClose}>
          Close
        </Button>
      </div>
    </form>
  );
}

/** The preview's verdict, its tests with the numbers met or missed, and what persistence adds. */
function DraftVerdict({ preview, loading, failed }: { preview: DraftPreview | undefined; loading: boolean; failed: boolean }) {
  if (loading) return <Loading label="Judging the draft on the latest analysis…" />;
  if (failed && !preview) return null;
  if (!preview) return null;
  if (!preview.snapshot)
    return (
      <p className="text-ink-soft" data-testid="rule-preview" data-verdict="none">
        This series has not been analysed yet, so there is nothing to judge the draft on.
      </p>
    );
  if (!preview.preview)
    return (
      <p className="text-warning" data-testid="rule-preview" data-verdict="none">
        The latest analysis failed ({preview.snapshot.error}); the draft cannot be judged until one succeeds.
      </p>
    );
  const { verdict, headline, checks, persistenceNote } = preview.preview;
  return (
    <div data-testid="rule-preview" data-verdict={verdict}>
      <p className={verdict === 'passes' ? 'font-medium text-warning' : verdict === 'cannot-judge' ? 'font-medium text-warning' : 'text-ink'}>{headline}</p>
      {checks.length ? (
        <ul className="mt-1 space-y-0.5 text-xs">
          {checks.map((c) => (
            <li key={c.test} className="num">
              <span aria-hidden="true">{c.passed ? '✓' : '✕'} </span>
              <span className="sr-only">{c.passed ? 'met: ' : 'missed: '}</span>
              {c.test} — {c.observed}
            </li>
          ))}
        </ul>
      ) : null}
      {persistenceNote ? <p className="mt-1 text-xs text-ink-soft">{persistenceNote}</p> : null}
    </div>
  );
}
