'use client';

import { CONTROL, Field } from './Field';

/**
 * "Why this change": the lead's reason for changing a setting or threshold, kept with the change and printed in the
 * settings history and period reports. Required on edits (a reviewer reads who, when and why together), optional
 * when something is first set up.
 */
export function ReasonField({
  value,
  onChange,
  required,
  error,
  className = '',
}: {
  value: string;
  onChange: (value: string) => void;
  required: boolean;
  error?: string | null;
  className?: string;
}) {
  return (
    <Field
      label={required ? 'Why this change' : 'Why (optional)'}
      hint="Kept with the change; period reports print it beside who and when."
      error={error}
      className={className}
    >
      <input
        value={value}
        onChange={(e) => onChange(e.target.value)}
        required={required}
        maxLength={1000}
        placeholder={required ? 'e.g. sensor replaced; window shortened to follow faster dynamics' : ''}
        className={`${CONTROL} w-full`}
        data-testid="change-reason"
      />
    </Field>
  );
}

/** The reason as the API takes it: trimmed, or left out when empty. */
export function reasonBody(reason: string): { reason?: string } {
  const trimmed = reason.trim();
  return trimmed ? { reason: trimmed } : {};
}
