import crypto from 'node:crypto';
import fs from 'node:fs';

/** SHA-256 of a body as sent (hex): the identity by which a repeated file is recognised. */
export function contentHashOf(data: string | Uint8Array): string {
  return crypto.createHash('sha256').update(data).digest('hex');
}

/** SHA-256 of a file's bytes, streamed so large drops are never held in memory. */
export async function hashFile(file: string): Promise<string> {
  const hash = crypto.createHash('sha256');
  for await (const chunk of fs.createReadStream(file)) hash.update(chunk as Buffer);
  return hash.digest('hex');
}
