import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { formatAge, formatP, formatUtc, formatValue } from '@/lib/display/format';
import { publicBaseUrl } from '@/lib/runtime/config';
import { ALERT_KIND_WORDS, DIRECTION_WORDS, describeExtent, indicatorLabel } from '@/lib/display/analysis-labels';
import { describeCalibration, kendallPLabel, tauThreshold, tauWithDirection, type CalibrationLine } from '@/lib/alerts/wording';

/** A rendered message: the same content as plain text and as self-contained HTML (no remote images, no scripts). */
export interface RenderedMail {
  subject: string;
  text: string;
  html: string;
}

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
function compose(parts: {
  subject: string;
  heading: string;
  intro: string[];
  rows?: Row[];
  link?: { href: string; label: string };
  outro?: string[];
  caution?: boolean;
  unsubscribe?: string;
}): RenderedMail {
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
    ...(parts.unsubscribe ? [`To stop receiving these: ${parts.unsubscribe}`, ''] : []),
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
${parts.unsubscribe ? `<p style="font-size:12px;color:#52606d;margin-top:12px"><a href="${escapeHtml(parts.unsubscribe)}" style="color:#52606d">Stop receiving these reports</a></p>` : ''}
</div></body></html>`;
  return { subject: oneLine(parts.subject), text, html };
}

/** What an alert message says about the evidence; built by lib/alerts from the alert, its rule (if any) and snapshot. */
export interface AlertEvidence {
  alertId: number;
  kind: 'slowing-down' | 'abrupt-shift' | 'data-late' | 'site-slowing-down';
  severity: 'watch' | 'warning';
  /** what the alert is on: its series, or for a site alert the site itself (name "site …", slug the site's) */
  series: { name: string; slug: string; site: string; timeZone: string };
  /** a site alert's member series, by name, analysed together; null for an alert on one series */
  siteMembers?: string[] | null;
  /** the rule's indicator; null for an abrupt-shift alert */
  indicator: string | null;
  /** the direction the rule looks in (tau and surrogate p are judged in it) */
  direction: string;
  tau: number | null;
  kendallP: number | null;
  /** direction of the descriptive Kendall p (the indicator's own) */
  kendallDirection: string;
  surrogateP: number | null;
  surrogateCount: number;
  surrogateMethod: string | null;
  latestValue: number | null;
  windowFraction: number | string;
  windowPoints: number | null;
  detrend: string;
  bandwidth: number | string;
  bandwidthPoints: number | null;
  dataFrom: number | null;
  dataTo: number | null;
  n: number;
  rule: {
    minTau: number;
    direction: string;
    maxSurrogateP: number | null;
    fdrLevel: number | null;
    levelThreshold: number | null;
    levelDirection: string;
    persistence: number;
  } | null;
  /** the rule's calibrated false-alarm rate; null = not yet calibrated */
  calibration: CalibrationLine | null;
  /** the abrupt shift an abrupt-shift alert reports */
  shift: { time: number; size: number | null } | null;
  /** the silence a data-late alert reports: last observation before it, first after it (null while silent) */
  silence?: { lastDataAt: number; backAt: number | null } | null;
}

function alertLink(alertId: number): string {
  return `${publicBaseUrl()}/alerts/${alertId}`;
}

function withPoints(extent: number | string, points: number | null, what: string): string {
  return `${describeExtent(extent, what)}${points !== null ? ` (${Math.round(points)} points)` : ''}`;
}

const SMOOTHERS: Partial<Record<string, string>> = { gaussian: 'Gaussian kernel smoothing', 'local-linear': 'local-linear Gaussian kernel smoothing' };

function describeDetrending(e: AlertEvidence): string {
  const smoother = SMOOTHERS[e.detrend];
  if (smoother)
    return `${smoother}, bandwidth ${describeExtent(e.bandwidth, 'the analysed stretch')}${e.bandwidthPoints !== null ? ` (kernel sd h = ${Math.round(e.bandwidthPoints)} points)` : ''}`;
  if (e.detrend === 'moving-average') return `centred moving average of ${e.bandwidthPoints ?? '?'} points`;
  return e.detrend;
}

function describeRule(r: NonNullable<AlertEvidence['rule']>): string {
  const parts = [tauThreshold(r.minTau, r.direction)];
  if (r.maxSurrogateP !== null) parts.push(`surrogate p ≤ ${r.maxSurrogateP}`);
  if (r.fdrLevel !== null) parts.push(`false-discovery q ≤ ${r.fdrLevel} across all series`);
  if (r.levelThreshold !== null) parts.push(`latest value ${r.levelDirection === 'below' ? '≤' : '≥'} ${r.levelThreshold}`);
  if (r.persistence > 1) parts.push(`${r.persistence} consecutive analyses`);
  return parts.join(', ');
}

function evidenceRows(e: AlertEvidence): Row[] {
  const series: Row = e.siteMembers
    ? ['Site', `${e.series.site} (${e.series.slug}): ${e.siteMembers.join(', ')} analysed together`]
    : ['Series', `${e.series.name} (${e.series.slug})${e.series.site ? `, ${e.series.site}` : ''}`];
  const span: Row = ['Data span', `${formatUtc(e.dataFrom)} to ${formatUtc(e.dataTo)} (${e.n} points analysed)`];
  if (e.kind === 'data-late') {
    return [
      series,
      ['Kind', 'data late (the series stopped delivering)'],
      ['Last data', formatUtc(e.silence?.lastDataAt ?? null)],
      ['Data back', e.silence?.backAt ? formatUtc(e.silence.backAt) : 'not yet'],
    ];
  }
  if (e.kind === 'abrupt-shift') {
    return [
      series,
      ['Kind', 'abrupt shift of level (change-point detection)'],
      ['Shift at', formatUtc(e.shift?.time ?? null)],
      ['Size', e.shift?.size === null || e.shift?.size === undefined ? 'not given by the analysis' : formatValue(e.shift.size)],
      span,
    ];
  }
  const label = indicatorLabel(e.indicator ?? '');
  return [
    series,
    ['Indicator', label],
    ['Kendall tau', tauWithDirection(e.tau, e.direction)],
    [
      'Surrogate p',
      e.surrogateCount > 0
        ? `${formatP(e.surrogateP)} (${DIRECTION_WORDS[e.direction as 'rising'] ?? e.direction}) from ${e.surrogateCount} ${e.surrogateMethod ?? ''} surrogates`.replace(
            /\s+/g,
            ' ',
          )
        : 'not tested (no surrogates in the series settings)',
    ],
    ['Kendall p', `${kendallPLabel(e.kendallP)}, ${DIRECTION_WORDS[e.kendallDirection as 'rising'] ?? e.kendallDirection}`],
    ['Latest value', formatValue(e.latestValue)],
    ['Rolling window', withPoints(e.windowFraction, e.windowPoints, 'the analysed stretch')],
    ['Detrending', describeDetrending(e)],
    span,
    ...(e.rule ? [['Rule', describeRule(e.rule)] as Row] : []),
    ['False alarms', describeCalibration(e.calibration)],
  ];
}

export function newAlertMail(e: AlertEvidence): RenderedMail {
  if (e.kind === 'abrupt-shift') return shiftAlertMail(e);
  const label = indicatorLabel(e.indicator ?? '');
  const level = e.severity === 'warning' ? 'Warning' : 'Watch';
  return compose({
    subject: `[Brinkwatch] ${level}: ${label} trend on ${e.series.name} (alert #${e.alertId})`,
    heading: `${level}: evidence of slowing down on ${e.series.name}`,
    intro: [
      `A rule on ${e.series.name} was met by the latest analysis: the ${label} trend is ${DIRECTION_WORDS[e.direction as 'rising'] ?? e.direction} as the rule asks. Please take the alert in the triage queue and decide what it means.`,
    ],
    rows: evidenceRows(e),
    link: { href: alertLink(e.alertId), label: 'Open the alert' },
    outro: [
      e.siteMembers
        ? 'You receive this because you watch a series of this site with immediate mail. Change it on the series page.'
        : 'You receive this because you watch this series with immediate mail. Change it on the series page.',
    ],
    caution: true,
  });
}

/** A detected abrupt shift of level: news in itself, and the live analysis now judges only the stretch after it. */
function shiftAlertMail(e: AlertEvidence): RenderedMail {
  const level = e.severity === 'warning' ? 'Warning' : 'Watch';
  return compose({
    subject: `[Brinkwatch] ${level}: abrupt shift on ${e.series.name} (alert #${e.alertId})`,
    heading: `${level}: abrupt shift of level on ${e.series.name}`,
    intro: [
      `The latest analysis of ${e.series.name} found an abrupt shift of level at ${formatUtc(e.shift?.time ?? null)}. This is a change that has happened (or an instrument or data problem), not an early warning of one.`,
      'From now on the slowing-down indicators are computed on the stretch after the shift only. Please take the alert in the triage queue and decide what it means.',
    ],
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
  kind: AlertEvidence['kind'];
  /** the rule's indicator; null for an abrupt-shift or data-late alert */
  indicator: string | null;
  direction: string | null;
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
      e.indicator === null
        ? `${e.severity}, ${ALERT_KIND_WORDS[e.kind]}, ${e.state} — ${alertLink(e.alertId)}`
        : `${e.severity}, ${indicatorLabel(e.indicator)}, tau ${tauWithDirection(e.tau, e.direction)}, surrogate p ${formatP(e.surrogateP)}, ${e.state} — ${alertLink(e.alertId)}`,
    ]),
    link: { href: `${publicBaseUrl()}/alerts`, label: 'Open the alert queues' },
    caution: true,
  });
}

/** What a data-late or data-back message names: the alert, its series and the silence. */
interface SilenceFacts {
  alertId: number;
  series: { name: string; slug: string; site: string };
  lastDataAt: number;
}

function silenceRows(f: SilenceFacts): Row[] {
  return [
    ['Series', `${f.series.name} (${f.series.slug})${f.series.site ? `, ${f.series.site}` : ''}`],
    ['Last data', formatUtc(f.lastDataAt)],
  ];
}

/** A series stopped delivering for longer than its lateness allows: a sensor, logger or transfer to check. */
export function dataLateMail(f: SilenceFacts & { lateAfterMs: number; now: number }): RenderedMail {
  return compose({
    subject: `[Brinkwatch] Data late: ${f.series.name} (alert #${f.alertId})`,
    heading: `No new data from ${f.series.name}`,
    intro: [
      `${f.series.name} has delivered nothing for ${formatAge(f.now - f.lastDataAt)}; it counts as late after ${formatAge(f.lateAfterMs)}. The sensor, its logger or the transfer may need a look.`,
      'While no data arrive, no early-warning indicator of this series is updated. The alert closes by itself when data return.',
    ],
    rows: silenceRows(f),
    link: { href: alertLink(f.alertId), label: 'Open the alert' },
    outro: ['You receive this because you watch this series. Change it on the series page.'],
  });
}

/** The data of a silent series returned, and its data-late alert closed by itself. */
export function dataBackMail(f: SilenceFacts & { backAt: number }): RenderedMail {
  return compose({
    subject: `[Brinkwatch] Data back: ${f.series.name} (alert #${f.alertId})`,
    heading: `${f.series.name} delivers again`,
    intro: [`New data reached Brinkwatch after a silence of ${formatAge(f.backAt - f.lastDataAt)} in the record. The data-late alert closed by itself.`],
    rows: [...silenceRows(f), ['Data back', formatUtc(f.backAt)]],
    link: { href: alertLink(f.alertId), label: 'See the alert' },
    outro: ['You receive this because you watch this series. Change it on the series page.'],
  });
}

/** What a scheduled period report mail states; built by lib/reports/schedules from the assembled report. */
export interface PeriodReportMailFacts {
  scheduleName: string;
  scope: string;
  periodLabel: string;
  from: string;
  to: string;
  seriesCount: number;
  completeness: number | null;
  alertsOpened: number;
  decided: number;
  undecided: number;
  medianHoursToDecision: number | null;
  lateStretches: number;
  changes: number;
  /** one line per series and per alert, already worded */
  seriesLines: Row[];
  alertLines: Row[];
  reportLink: string;
  unsubscribeLink: string;
}

/**
 * A scheduled period report, readable without an account: the headline numbers, one line per series and per alert
 * opened, the caution, a link to the full report for those who sign in, and an unsubscribe link that needs none.
 */
export function periodReportMail(f: PeriodReportMailFacts): RenderedMail {
  const percent = f.completeness === null ? 'not defined (irregular records only)' : `${(f.completeness * 100).toFixed(1)} %`;
  return compose({
    subject: `[Brinkwatch] ${f.scheduleName}: period report ${f.periodLabel} (${f.scope})`,
    heading: `Period report ${f.periodLabel}: ${f.scope}`,
    intro: [
      `The ${f.scheduleName} report for ${f.from} to ${f.to} (UTC days): ${f.seriesCount} series, data completeness ${percent}, ${f.lateStretches} late stretch${f.lateStretches === 1 ? '' : 'es'}.`,
      `${f.alertsOpened} alert${f.alertsOpened === 1 ? '' : 's'} opened; ${f.decided} decided by the team${f.medianHoursToDecision === null ? '' : ` (median time to decision ${f.medianHoursToDecision.toFixed(1)} h)`}, ${f.undecided} awaiting a decision. ${f.changes} change${f.changes === 1 ? '' : 's'} of settings or rules.`,
    ],
    rows: [...f.seriesLines, ...f.alertLines],
    link: { href: f.reportLink, label: 'Open the full report (sign-in needed)' },
    outro: ['You receive this because a lead of the team added your address to this scheduled report.'],
    caution: true,
    unsubscribe: f.unsubscribeLink,
  });
}
