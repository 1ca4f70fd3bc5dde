'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { api } from '@/components/api';
import { ErrorNote, Panel } from '@/components/States';
import { Button } from '@/components/ui/Button';
import type { RuleRecord, RuleStatus } from '@/lib/alerts/rules';
import type { RuleTemplate } from '@/lib/alerts/rule-templates';
import type { IndicatorName } from '@/lib/engine/settings';
import { RuleEditor, draftOf, type RuleDraft } from './RuleEditor';
import { RuleList } from './RuleList';

/**
 * The series' alert rules: everyone reads how each stands; a lead also writes new ones (from a template or from
 * scratch), edits, pauses or resumes and deletes them. The server refuses all of it to anyone below lead anyway.
 */
export function RulesPanel({
  slug,
  statuses,
  timeZone,
  canEdit,
  indicators,
  templates,
}: {
  slug: string;
  statuses: RuleStatus[];
  timeZone: string;
  canEdit: boolean;
  indicators: IndicatorName[];
  templates: readonly RuleTemplate[];
}) {
  const router = useRouter();
  const [editing, setEditing] = useState<{ id: number | null; draft: RuleDraft; key: number } | null>(null);
  const open = (id: number | null, draft: RuleDraft) => setEditing((e) => ({ id, draft, key: (e?.key ?? 0) + 1 }));
  const change = useMutation({
    mutationFn: async ({ rule, action }: { rule: RuleRecord; action: 'pause' | 'resume' | 'delete' }) => {
      if (action === 'delete') return api<{ deleted: boolean; deactivated: boolean }>(`/api/rules/${rule.id}`, { method: 'DELETE' });
      await api(`/api/rules/${rule.id}`, { method: 'PATCH', body: { active: action === 'resume' } });
      return { deleted: false, deactivated: false };
    },
    onSuccess: () => router.refresh(),
  });
  const deactivated = change.data?.deactivated ?? false;
  const starter = templates[0]?.rule;

  return (
    <Panel
      title="Alert rules"
      id="rules"
      actions={
        canEdit && starter ? (
          <Button variant="primary" onClick={() => open(null, draftOf(starter))} data-testid="rule-new">
            New rule
          </Button>
        ) : null
      }
    >
      <RuleList
        statuses={statuses}
        timeZone={timeZone}
        actions={
          canEdit
            ? (rule) => (
                <>
                  <Button size="sm" onClick={() => open(rule.id, draftOf(rule))} data-testid={`rule-edit-${rule.id}`}>
                    Edit
                  </Button>
                  <Button size="sm" onClick={() => change.mutate({ rule, action: rule.active ? 'pause' : 'resume' })}>
                    {rule.active ? 'Pause' : 'Resume'}
                  </Button>
                  <Button
                    size="sm"
                    variant="danger"
                    onClick={() => {
                      if (window.confirm(`Delete rule #${rule.id}? A rule that already raised alerts is paused instead, so its alerts keep their evidence.`))
                        change.mutate({ rule, action: 'delete' });
                    }}
                  >
                    Delete
                  </Button>
                </>
              )
            : undefined
        }
      />
      {change.error ? <ErrorNote error={change.error}>Not changed.</ErrorNote> : null}
      {deactivated ? (
        <p role="status" className="mt-2 text-sm text-ink-soft">
          That rule had raised alerts, so it was paused instead of deleted.
        </p>
      ) : null}
      {canEdit ? null : <p className="mt-3 text-xs text-ink-soft">A lead writes and changes the rules of a series.</p>}
      {editing ? (
        <RuleEditor
          key={editing.key}
          slug={slug}
          ruleId={editing.id}
          initial={editing.draft}
          indicators={indicators}
          templates={templates}
          onClose={() => setEditing(null)}
        />
      ) : null}
    </Panel>
  );
}
