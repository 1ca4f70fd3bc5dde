'use client';

import { useSyncExternalStore, type AriaAttributes } from 'react';
import { ApiError } from '@/components/api';
import { CONTROL } from '@/components/ui/Field';

/** The server's first message for a field (dotted path as the API gives it), for `Field`'s error line. */
export function fieldError(error: unknown, key: string): string | null {
  return error instanceof ApiError ? (error.fields?.[key]?.[0] ?? null) : null;
}

/** What failed, for the line under a form: the server's message, or that it could not be reached. */
export function failureText(error: unknown): string {
  if (error instanceof ApiError) return error.message;
  return 'The server could not be reached. Check the connection and try again.';
}

const noSubscribe = () => () => {};
let knownZones: string[] | null = null;
/** Read once: the snapshot must be the same array on every call. */
const zones = () => (knownZones ??= ['UTC', ...Intl.supportedValuesOf('timeZone')]);
const NO_ZONES: string[] = ['UTC'];
const noZones = () => NO_ZONES;

/** A time-zone box that suggests the IANA zones the browser knows (the server checks the name again). */
export function TimeZoneInput({ value, onChange, id, ...aria }: { value: string; onChange: (zone: string) => void; id: string } & AriaAttributes) {
  const known = useSyncExternalStore(noSubscribe, zones, noZones);
  return (
    <>
      <input
        {...aria}
        value={value}
        onChange={(e) => onChange(e.target.value)}
        list={`${id}-zones`}
        required
        autoComplete="off"
        spellCheck={false}
        className={`${CONTROL} w-full`}
      />
      <datalist id={`${id}-zones`}>
        {known.map((zone) => (
          <option key={zone} value={zone} />
        ))}
      </datalist>
    </>
  );
}
