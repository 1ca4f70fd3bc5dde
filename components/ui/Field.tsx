'use client';

import { cloneElement, useId, type AriaAttributes, type ReactElement, type ReactNode } from 'react';

/**
 * How a field reads: `filter` small grey words over a control in a row of filters, `form` a label over a full-width
 * control in a form.
 */
export type FieldTone = 'filter' | 'form';

const LABELS: Record<FieldTone, string> = {
  filter: 'flex flex-col text-xs font-medium text-ink-soft',
  form: 'flex flex-col text-sm font-medium',
};

/** The look of a text box or menu; `CONTROL` inside a field (set off its label), `CONTROL_BARE` beside words. */
export const CONTROL_BARE = 'rounded border border-rule bg-card px-2 py-1.5 text-sm font-normal text-ink';
export const CONTROL = `mt-1 ${CONTROL_BARE}`;

/**
 * A label with its control, and under it a hint or the field's error from the server. The label wraps the control,
 * so its words are the control's name and nothing else; hint and error are tied to the control through
 * aria-describedby, and an error sets aria-invalid.
 */
export function Field({
  label,
  hint,
  error,
  tone = 'form',
  className = '',
  children,
}: {
  label: ReactNode;
  hint?: ReactNode;
  error?: string | null;
  tone?: FieldTone;
  className?: string;
  /** one control: input, select or textarea */
  children: ReactElement<AriaAttributes>;
}) {
  const id = useId();
  const described = [hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(' ') || undefined;
  const control = cloneElement(children, {
    'aria-describedby': described,
    ...(error ? { 'aria-invalid': true } : {}),
  });
  if (!hint && !error) {
    return (
      <label className={`${LABELS[tone]} ${className}`}>
        {label}
        {control}
      </label>
    );
  }
  return (
    <div className={className}>
      <label className={LABELS[tone]}>
        {label}
        {control}
      </label>
      {hint ? (
        <p id={`${id}-hint`} className="mt-1 text-xs text-ink-soft">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} className="mt-1 text-xs text-warning">
          <span aria-hidden="true">✕ </span>
          {error}
        </p>
      ) : null}
    </div>
  );
}
