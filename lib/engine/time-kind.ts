/** How a series' times are numbered: epoch milliseconds (UTC instants) or plain numbers (e.g. years before present). */
export type TimeKind = 'utc-ms' | 'numeric';
