import bcrypt from 'bcryptjs';
import { config } from '@/lib/runtime/config';

/** bcrypt work factor; 10 is the floor recommended by OWASP's password storage cheat sheet (common practice), enforced by the configuration schema. */
export const BCRYPT_COST = config().BCRYPT_COST;

export function hashPassword(plain: string): Promise<string> {
  return bcrypt.hash(plain, BCRYPT_COST);
}

export function verifyPassword(plain: string, hash: string | null): Promise<boolean> {
  // Compare against a fixed hash when the account has none, so timing does not reveal which accounts exist.
  return bcrypt.compare(plain, hash ?? '$2b$10$CwTycUXWue0Thq9StjUM0uJ8.jMRiW9H5Dzx6IaJcxHn3mSx0a3Ry');
}
