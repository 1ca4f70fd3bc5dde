/** How the time axis is read: UTC milliseconds (dates) or plain numbers in the caller's own unit. */
export type TimeKind = 'utc-ms' | 'numeric';
