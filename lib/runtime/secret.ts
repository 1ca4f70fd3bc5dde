import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { config, dataDir } from '@/lib/runtime/config';

/**
 * NEXTAUTH_SECRET signs session cookies. When the environment gives none, one is generated on first start and kept
 * in DATA_DIR (mode 0600) so sessions survive restarts; rotating it is deleting the file (everyone signs in again).
 */
export function ensureAuthSecret(): string {
  const configured = config().NEXTAUTH_SECRET;
  if (configured) return configured;
  const file = path.join(dataDir(), 'auth-secret');
  if (fs.existsSync(file)) return fs.readFileSync(file, 'utf8').trim();
  fs.mkdirSync(dataDir(), { recursive: true });
  const secret = crypto.randomBytes(32).toString('base64url');
  try {
    fs.writeFileSync(file, secret + '\n', { mode: 0o600, flag: 'wx' });
    return secret;
  } catch {
    // Another process won the race to create it; use theirs.
    return fs.readFileSync(file, 'utf8').trim();
  }
}
