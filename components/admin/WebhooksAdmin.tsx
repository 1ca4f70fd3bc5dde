'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api, ApiError } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { WEBHOOK_EVENTS, WEBHOOK_EVENT_LABELS, type WebhookEvent } from '@/lib/webhooks/events';
import type { WebhookEndpointRecord } from '@/lib/webhooks/admin';
import { WebhookDeliveries } from './WebhookDeliveries';

const KEY = ['webhooks'];

/** Register endpoints (the secret is shown once), pause, resume or remove them, and open their deliveries. */
export function WebhooksAdmin() {
  const client = useQueryClient();
  // Counts change as the delivery job works, so the list refreshes itself like the deliveries under it.
  const endpoints = useQuery({
    queryKey: KEY,
    queryFn: () => api<{ items: WebhookEndpointRecord[] }>('/api/webhooks').then((r) => r.items),
    refetchInterval: 15_000,
  });
  const [open, setOpen] = useState<number | null>(null);
  const refresh = () => client.invalidateQueries({ queryKey: KEY });
  const toggle = useMutation({
    mutationFn: (e: WebhookEndpointRecord) => api(`/api/webhooks/${e.id}`, { method: 'PATCH', body: { active: !e.active } }),
    onSuccess: refresh,
  });
  const remove = useMutation({
    mutationFn: (id: number) => api(`/api/webhooks/${id}`, { method: 'DELETE' }),
    onSuccess: (_data, id) => {
      if (open === id) setOpen(null);
      return refresh();
    },
  });
  return (
    <div className="space-y-4">
      <RegisterForm onRegistered={refresh} />
      <Panel title="Endpoints" id="webhook-endpoints">
        {endpoints.isPending ? (
          <Loading />
        ) : endpoints.isError ? (
          <ErrorNote error={endpoints.error} />
        ) : endpoints.data.length === 0 ? (
          <Empty>No endpoint is registered; alerts leave by e-mail only.</Empty>
        ) : (
          <ul className="divide-y divide-rule text-sm" data-testid="webhook-endpoints">
            {endpoints.data.map((e) => (
              <li key={e.id} className="space-y-2 py-3">
                <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
                  <span className="break-all font-mono">{e.url}</span>
                  <span className={e.active ? 'text-ink-soft' : 'font-medium text-warning'}>{e.active ? '● receiving' : '○ paused'}</span>
                  <span className="ml-auto flex gap-2">
                    <Button size="sm" aria-expanded={open === e.id} onClick={() => setOpen(open === e.id ? null : e.id)}>
                      Deliveries
                    </Button>
                    <Button size="sm" onClick={() => toggle.mutate(e)} disabled={toggle.isPending}>
                      {e.active ? 'Pause' : 'Resume'}
                    </Button>
                    <Button
                      size="sm"
                      variant="danger"
                      disabled={remove.isPending}
                      onClick={() => {
                        if (window.confirm(`Remove ${e.url} and its delivery history?`)) remove.mutate(e.id);
                      }}
                    >
                      Remove
                    </Button>
                  </span>
                </div>
                {e.description ? <p>{e.description}</p> : null}
                <p className="text-ink-soft">
                  {e.events.join(', ')} · registered <LocalTime t={e.createdAt} timeZone="UTC" withZone /> ·{' '}
                  {Object.entries(e.counts)
                    .map(([status, n]) => `${n} ${status}`)
                    .join(', ') || 'nothing sent yet'}
                  {e.lastDeliveredAt ? (
                    <>
                      {' '}
                      · last received <LocalTime t={e.lastDeliveredAt} timeZone="UTC" withZone />
                    </>
                  ) : null}
                </p>
                {open === e.id ? <WebhookDeliveries endpointId={e.id} /> : null}
              </li>
            ))}
          </ul>
        )}
        {toggle.isError ? <ErrorNote error={toggle.error}>Not changed.</ErrorNote> : null}
        {remove.isError ? <ErrorNote error={remove.error}>Not removed.</ErrorNote> : null}
      </Panel>
    </div>
  );
}

function RegisterForm({ onRegistered }: { onRegistered: () => void }) {
  const [url, setUrl] = useState('');
  const [description, setDescription] = useState('');
  const [events, setEvents] = useState<WebhookEvent[]>(['alert.opened', 'alert.abrupt-shift']);
  const [secret, setSecret] = useState<string | null>(null);
  const register = useMutation({
    mutationFn: () => api<{ id: number; secret: string }>('/api/webhooks', { method: 'POST', body: { url, events, description } }),
    onSuccess: (data) => {
      setSecret(data.secret);
      setUrl('');
      setDescription('');
      onRegistered();
    },
  });
  const fieldError = (field: string) => (register.error instanceof ApiError ? (register.error.fields?.[field]?.[0] ?? null) : null);
  const choose = (event: WebhookEvent, on: boolean) => setEvents((list) => (on ? [...list, event] : list.filter((e) => e !== event)));
  return (
    <Panel title="Register an endpoint" id="webhook-register">
      <form
        className="space-y-3"
        onSubmit={(e) => {
          e.preventDefault();
          setSecret(null);
          register.mutate();
        }}
      >
        <Field label="Address" hint="https://…, or http:// to this machine only (127.0.0.1, ::1, localhost)." error={fieldError('url')}>
          <input
            type="url"
            required
            value={url}
            onChange={(e) => setUrl(e.target.value)}
            className={CONTROL}
            placeholder="https://hooks.example.org/brinkwatch"
          />
        </Field>
        <Field label="What receives it (optional)" error={fieldError('description')}>
          <input
            value={description}
            onChange={(e) => setDescription(e.target.value)}
            className={CONTROL}
            maxLength={200}
            placeholder="e.g. operations chat, ticket queue of the water authority"
          />
        </Field>
        <fieldset aria-describedby={fieldError('events') ? 'webhook-events-error' : undefined}>
          <legend className="text-sm font-medium">Events</legend>
          <div className="mt-1 grid gap-1 sm:grid-cols-2">
            {WEBHOOK_EVENTS.map((event) => (
              <label key={event} className="flex items-start gap-2 text-sm">
                <input type="checkbox" className="mt-1" checked={events.includes(event)} onChange={(e) => choose(event, e.target.checked)} />
                <span>
                  {WEBHOOK_EVENT_LABELS[event]} <code className="text-xs text-ink-soft">{event}</code>
                </span>
              </label>
            ))}
          </div>
          {fieldError('events') ? (
            <p id="webhook-events-error" className="mt-1 text-xs text-warning">
              <span aria-hidden="true">✕ </span>
              {fieldError('events')}
            </p>
          ) : null}
        </fieldset>
        <Button type="submit" variant="primary" disabled={register.isPending || events.length === 0}>
          Register
        </Button>
      </form>
      {secret ? (
        <div role="status" className="mt-3 rounded border border-watch bg-watch-light p-3 text-sm">
          <p className="font-medium">Give this signing secret to the receiver now; it is not shown again.</p>
          <code className="mt-1 block break-all font-mono" data-testid="webhook-secret">
            {secret}
          </code>
          <p className="mt-1 text-ink-soft">The receiver checks X-Brinkwatch-Signature with it; README explains how.</p>
        </div>
      ) : null}
      {register.error && !fieldError('url') && !fieldError('events') && !fieldError('description') ? (
        <ErrorNote error={register.error}>Not registered.</ErrorNote>
      ) : null}
    </Panel>
  );
}
