import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { formatP, formatTau, formatUtc, formatValue } from '@/lib/display/format';
import { publicBaseUrl } from '@/lib/config';

/** A rendered message: the same content as plain text and as self-contained HTML (no remote images, no scripts). */
export interface RenderedMail {
  subject: string;
  text: string;
  html: string;
}

export const INDICATOR_LABELS: Record<string, string> = {
  variance: 'variance',
  sd: 'standard deviation',
  cv: 'coefficient of variation',
  ac1: 'lag-1 autocorrelation',
  skewness: 'skewness',
  kurtosis: 'kurtosis',
  recovery: 'recovery rate',
};

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

/** Subjects are one header line: user text with line breaks would otherwise start a new header. */
function oneLine(text: string): string {
  return text.replace(/[\r\n]+/g, ' ').trim();
}

type Row = [label: string, value: string];

/**
 * The one layout of every message: heading, an optional table of facts, paragraphs, an optional button link,
 * and the standing caution when the message carries indicator evidence. Everything user-supplied is escaped here.
 */
function compose(parts: { subject: string; heading: string; intro: string[]; rows?: Row[]; link?: { href: string; label: string }; outro?: string[]; caution?: boolean }): RenderedMail {
  const rows = parts.rows ?? [];
  const width = Math.max(0, ...rows.map(([label]) => label.length));
  const text = [
    parts.heading,
    '',
    ...parts.intro.flatMap((p) => [p, '']),
    ...(rows.length ? [...rows.map(([label, value]) => `${label.padEnd(width)}  ${value}`), ''] : []),
    ...(parts.link ? [`${parts.link.label}: ${parts.link.href}`, ''] : []),
    ...(parts.outro ?? []).flatMap((p) => [p, '']),
    ...(parts.caution ? [`Caution: ${ANALYSIS_CAUTION}`, ''] : []),
    '— Brinkwatch',
  ].join('\n');
  const cell = 'padding:4px 12px 4px 0;vertical-align:top;border-bottom:1px solid #e3e0d8';
  const html = `<!doctype html><html><body style="margin:0;background:#f7f5f0;font-family:system-ui,-apple-system,Segoe UI,sans-serif;color:#1f2933">
<div style="max-width:640px;margin:0 auto;padding:24px">
<p style="font:600 11px/1 monospace;letter-spacing:.12em;text-transform:uppercase;color:#1f6f8b;margin:0 0 8px">Brinkwatch</p>
<h1 style="font-size:20px;margin:0 0 16px">${escapeHtml(parts.heading)}</h1>
${parts.intro.map((p) => `<p style="margin:0 0 12px;line-height:1.5">${escapeHtml(p)}</p>`).join('\n')}
${rows.length ? `<table style="border-collapse:collapse;margin:8px 0 16px;font-size:14px">${rows.map(([label, value]) => `<tr><th align="left" style="${cell};font-weight:600">${escapeHtml(label)}</th><td style="${cell}">${escapeHtml(value)}</td></tr>`).join('')}</table>` : ''}
${parts.link ? `<p style="margin:16px 0"><a href="${escapeHtml(parts.link.href)}" style="display:inline-block;background:#1f6f8b;color:#fff;text-decoration:none;padding:10px 16px;border-radius:6px">${escapeHtml(parts.link.label)}</a></p><p style="font-size:12px;color:#52606d;margin:0 0 16px">${escapeHtml(parts.link.href)}</p>` : ''}
${(parts.outro ?? []).map((p) => `<p style="margin:0 0 12px;line-height:1.5">${escapeHtml(p)}</p>`).join('\n')}
${parts.caution ? `<p style="font-size:12px;color:#52606d;border-top:1px solid #e3e0d8;padding-top:12px;margin-top:16px"><strong>Caution:</strong> ${escapeHtml(ANALYSIS_CAUTION)}</p>` : ''}
</div></body></html>`;
  return { subject: oneLine(parts.subject), text, html };
}

/** What an alert message says about the evidence; built by lib/alerts from the alert, its rule and snapshot. */
export interface AlertEvidence {
  alertId: number;
  severity: 'watch' | 'warning';
  series: { name: string; slug: string; site: string; timeZone: string };
  indicator: string;
  tau: number | null;
  kendallP: number | null;
  surrogateP: number | null;
  surrogateCount: number;
  surrogateMethod: string | null;
  latestValue: number | null;
  windowFraction: number;
  windowPoints: number | null;
  detrend: string;
  bandwidth: number;
  bandwidthPoints: number | null;
  dataFrom: number | null;
  dataTo: number | null;
  n: number;
  rule: { minTau: number; maxSurrogateP: number | null; maxKendallP: number | null; levelThreshold: number | null; levelDirection: string; persistence: number };
}

export function alertLink(alertId: number): string {
  return `${publicBaseUrl()}/alerts/${alertId}`;
}

function describeDetrending(e: AlertEvidence): string {
  if (e.detrend === 'gaussian') return `Gaussian kernel smoothing, bandwidth ${e.bandwidth} of the record${e.bandwidthPoints !== null ? ` (h = ${Math.round(e.bandwidthPoints)} points)` : ''}`;
  if (e.detrend === 'moving-average') return `centred moving average of ${e.bandwidthPoints ?? '?'} points`;
  return e.detrend;
}

function describeRule(r: AlertEvidence['rule']): string {
  const parts = [`tau ≥ ${r.minTau}`];
  if (r.maxSurrogateP !== null) parts.push(`surrogate p ≤ ${r.maxSurrogateP}`);
  if (r.maxKendallP !== null) parts.push(`Kendall p ≤ ${r.maxKendallP}`);
  if (r.levelThreshold !== null) parts.push(`latest value ${r.levelDirection === 'below' ? '≤' : '≥'} ${r.levelThreshold}`);
  if (r.persistence > 1) parts.push(`${r.persistence} consecutive analyses`);
  return parts.join(', ');
}

export function evidenceRows(e: AlertEvidence): Row[] {
  const label = INDICATOR_LABELS[e.indicator] ?? e.indicator;
  return [
    ['Series', `${e.series.name} (${e.series.slug})${e.series.site ? `, ${e.series.site}` : ''}`],
    ['Indicator', `${label} (${e.indicator})`],
    ['Kendall tau', formatTau(e.tau)],
    ['Kendall p', formatP(e.kendallP)],
    ['Surrogate p', e.surrogateCount > 0 ? `${formatP(e.surrogateP)} from ${e.surrogateCount} ${e.surrogateMethod ?? ''} surrogates`.replace(/\s+/g, ' ') : 'not tested (no surrogates in the series settings)'],
    ['Latest value', formatValue(e.latestValue)],
    ['Rolling window', `${Math.round(e.windowFraction * 100)}% of the record${e.windowPoints !== null ? ` (${e.windowPoints} points)` : ''}`],
    ['Detrending', describeDetrending(e)],
    ['Data span', `${formatUtc(e.dataFrom)} to ${formatUtc(e.dataTo)} (${e.n} points analysed)`],
    ['Rule', describeRule(e.rule)],
  ];
}

export function newAlertMail(e: AlertEvidence): RenderedMail {
  const label = INDICATOR_LABELS[e.indicator] ?? e.indicator;
  const level = e.severity === 'warning' ? 'Warning' : 'Watch';
  return compose({
    subject: `[Brinkwatch] ${level}: ${label} trend on ${e.series.name} (alert #${e.alertId})`,
    heading: `${level}: rising evidence of slowing down on ${e.series.name}`,
    intro: [`A rule on ${e.series.name} was met by the latest analysis. Please take the alert in the triage queue and decide what it means.`],
    rows: evidenceRows(e),
    link: { href: alertLink(e.alertId), label: 'Open the alert' },
    outro: ['You receive this because you watch this series with immediate mail. Change it on the series page.'],
    caution: true,
  });
}

export function escalationMail(e: AlertEvidence, by: string, note: string | null): RenderedMail {
  return compose({
    subject: `[Brinkwatch] Escalated to leads: ${e.series.name} (alert #${e.alertId})`,
    heading: `${by} asks a lead to review an alert on ${e.series.name}`,
    intro: note ? [`Note from ${by}: ${note}`] : [`${by} escalated this alert for a lead's decision.`],
    rows: evidenceRows(e),
    link: { href: alertLink(e.alertId), label: 'Review the alert' },
    caution: true,
  });
}

export function signOffMail(e: AlertEvidence, by: string, note: string | null): RenderedMail {
  return compose({
    subject: `[Brinkwatch] Confirmed early warning: ${e.series.name} (alert #${e.alertId})`,
    heading: `${by} confirmed an early warning on ${e.series.name}`,
    intro: [
      `After review, ${by} signed off that this alert reflects a real change in the dynamics of the series, not an artefact.`,
      ...(note ? [`Note: ${note}`] : []),
    ],
    rows: evidenceRows(e),
    link: { href: alertLink(e.alertId), label: 'See the decision' },
    outro: ['You receive this because you watch this series.'],
    caution: true,
  });
}

export function invitationMail(input: { name: string; role: string; invitedBy: string; link: string; expiresAt: Date }): RenderedMail {
  return compose({
    subject: '[Brinkwatch] You are invited to Brinkwatch',
    heading: `Welcome, ${input.name}`,
    intro: [`${input.invitedBy} invited you to Brinkwatch with the ${input.role} role. Choose a password to activate your account.`],
    link: { href: input.link, label: 'Set your password' },
    outro: [`The link works once and expires ${formatUtc(input.expiresAt)}. If you did not expect this, ignore this message.`],
  });
}

export function passwordResetMail(input: { name: string; link: string; expiresAt: Date }): RenderedMail {
  return compose({
    subject: '[Brinkwatch] Reset your password',
    heading: `Password reset for ${input.name}`,
    intro: ['Someone (hopefully you) asked to reset the password of this Brinkwatch account.'],
    link: { href: input.link, label: 'Choose a new password' },
    outro: [`The link works once and expires ${formatUtc(input.expiresAt)}. If you did not ask for this, ignore this message; your password stays as it is.`],
  });
}

export interface DigestEntry {
  alertId: number;
  seriesName: string;
  indicator: string;
  severity: string;
  state: string;
  tau: number | null;
  surrogateP: number | null;
  openedAt: Date;
}

export function digestMail(input: { name: string; since: Date; entries: DigestEntry[] }): RenderedMail {
  const count = input.entries.length;
  return compose({
    subject: `[Brinkwatch] Daily digest: ${count} alert${count === 1 ? '' : 's'} on series you watch`,
    heading: `Your digest, ${input.name}`,
    intro: [`Alerts opened or decided since ${formatUtc(input.since)} on the series you follow by digest:`],
    rows: input.entries.map((e) => [
      `#${e.alertId} ${e.seriesName}`,
      `${e.severity}, ${INDICATOR_LABELS[e.indicator] ?? e.indicator}, tau ${formatTau(e.tau)}, surrogate p ${formatP(e.surrogateP)}, ${e.state} — ${alertLink(e.alertId)}`,
    ]),
    link: { href: `${publicBaseUrl()}/alerts`, label: 'Open the alert queues' },
    caution: true,
  });
}
