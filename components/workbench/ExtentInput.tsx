'use client';

import { useId, useState } from 'react';
import type { AnalysisSettings } from '@/lib/engine/settings';
import { describeExtent } from '@/lib/display/analysis-labels';

/** A window, bandwidth or span as the settings hold it: a fraction, or text (points or an ISO 8601 duration). */
export type Extent = AnalysisSettings['window'];

const field = 'mt-1 w-full rounded border border-rule bg-card px-2 py-1.5 text-sm';

/** Text as typed → an extent: a plain number is a fraction, anything else ("500 points", "P90D") stays text. */
export function extentFromText(text: string): Extent {
  const trimmed = text.trim();
  return /^(?:\d+\.?\d*|\.\d+)$/.test(trimmed) ? Number(trimmed) : trimmed;
}

/**
 * A window, bandwidth or span typed as a fraction ("0.5"), a number of points ("500 points") or an ISO 8601
 * duration ("P90D", "P2Y", "PT12H"). Text that does not read as one stays in the field with a message and is not
 * passed on; `accepts` decides (the settings schema, so the form and the server agree). Empty means null where
 * `nullable`.
 */
export function ExtentInput({
  label,
  value,
  onChange,
  accepts,
  nullable = false,
  testId,
  valueTestId,
  of,
}: {
  label: string;
  value: Extent | null;
  onChange: (value: Extent | null) => void;
  accepts: (value: Extent | null) => boolean;
  nullable?: boolean;
  testId?: string;
  valueTestId?: string;
  /** what a fraction is a fraction of, for the description */
  of: string;
}) {
  const [text, setText] = useState(value === null ? '' : String(value));
  const [invalid, setInvalid] = useState(false);
  const hintId = useId();
  // A value changed from outside (back to saved settings) replaces the text unless the text already says it; done
  // while rendering, React's pattern for state that follows a prop (react.dev, "You might not need an effect").
  const [shown, setShown] = useState(value);
  if (shown !== value) {
    setShown(value);
    const typed = text.trim() === '' ? null : extentFromText(text);
    if (typed !== value) setText(value === null ? '' : String(value));
    setInvalid(false);
  }
  function change(next: string) {
    setText(next);
    const candidate = next.trim() === '' ? (nullable ? null : undefined) : extentFromText(next);
    const ok = candidate !== undefined && accepts(candidate);
    setInvalid(!ok);
    if (ok) onChange(candidate);
  }
  return (
    <label className="block text-sm font-medium">
      {label}:{' '}
      <span className="num" data-testid={valueTestId}>
        {describeExtent(value, of)}
      </span>
      <input
        type="text"
        inputMode="text"
        value={text}
        onChange={(e) => change(e.target.value)}
        className={field}
        data-testid={testId}
        aria-invalid={invalid}
        aria-describedby={hintId}
        placeholder={nullable ? 'whole record' : undefined}
      />
      <span id={hintId} className={`mt-1 block text-xs font-normal ${invalid ? 'text-warning' : 'text-ink-soft'}`}>
        {invalid ? 'Not read: ' : ''}a fraction (0.5), a number of points (500 points) or an ISO 8601 duration (P90D, P2Y, PT12H)
        {nullable ? '; empty for the whole record' : ''}.
      </span>
    </label>
  );
}
