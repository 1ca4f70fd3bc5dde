import crypto from 'node:crypto';

/**
 * The signature header's value: `sha256=` + hex HMAC-SHA256 (RFC 2104 with SHA-256) keyed by the endpoint's
 * secret over `timestamp + "." + rawBody`, the timestamp being the `X-Brinkwatch-Timestamp` header (unix
 * seconds). Signing the timestamp with the body lets a receiver refuse an old delivery replayed later. O(body).
 */
export function webhookSignature(secret: string, timestamp: number, rawBody: string): string {
  return `sha256=${crypto.createHmac('sha256', secret).update(`${timestamp}.${rawBody}`, 'utf8').digest('hex')}`;
}
