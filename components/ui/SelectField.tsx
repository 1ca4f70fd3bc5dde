'use client';

import { CONTROL, Field } from './Field';

/** A labelled menu of `[value, words]` choices; the value comes back as the menu's string. */
export function SelectField({
  label,
  value,
  options,
  onChange,
}: {
  label: string;
  value: string | number;
  options: readonly (readonly [string | number, string])[];
  onChange: (value: string) => void;
}) {
  return (
    <Field label={label}>
      <select value={value} onChange={(e) => onChange(e.target.value)} className={CONTROL}>
        {options.map(([choice, words], i) => (
          <option key={i} value={choice}>
            {words}
          </option>
        ))}
      </select>
    </Field>
  );
}
