import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { MailMessage, User, UserToken, db } from '@/models';
import { verifyPassword } from '@/lib/auth/password';
import { ConflictError } from '@/lib/http/errors';
import { inviteUser, updateUser } from '@/lib/users/directory';
import { acceptInvitation, requestPasswordReset, resetPassword } from '@/lib/users/passwords';
import { TOKEN_LIFETIME_MS, hashToken } from '@/lib/users/tokens';
import type { Actor } from '@/lib/auth/roles';

let admin: Actor;

beforeAll(async () => {
  await db();
  await migrateUp();
  const user = await User.create({ email: 'root@example.test', name: 'Root Admin', role: 'admin', passwordHash: null, active: true });
  admin = { id: user.id, email: user.email, name: user.name, role: 'admin' };
});

const linkToken = (text: string, kind: 'invite' | 'reset') => new RegExp(`/${kind}/([A-Za-z0-9_-]+)`).exec(text)![1];

describe('invitations', () => {
  it('creates an inactive account, mails a single-use link and stores only its hash', async () => {
    const user = await inviteUser({ email: 'Field.Analyst@Example.test', name: 'Field Analyst', role: 'analyst' }, admin);
    expect(user).toMatchObject({ email: 'field.analyst@example.test', active: false, passwordHash: null });
    const mail = (await MailMessage.findOne({ where: { kind: 'invitation' } }))!;
    expect(mail.textBody).toContain('Root Admin invited you');
    const token = linkToken(mail.textBody, 'invite');
    const stored = (await UserToken.findOne({ where: { userId: user.id } }))!;
    expect(stored.tokenHash).toBe(hashToken(token));
    expect(stored.tokenHash).not.toContain(token);

    await expect(inviteUser({ email: 'field.analyst@example.test', name: 'Again', role: 'viewer' }, admin)).rejects.toBeInstanceOf(ConflictError);
    await expect(acceptInvitation(token, 'too short')).rejects.toThrow();
    await acceptInvitation(token, 'correct horse battery');
    await user.reload();
    expect(user.active).toBe(true);
    expect(await verifyPassword('correct horse battery', user.passwordHash)).toBe(true);
    await expect(acceptInvitation(token, 'another long password')).rejects.toThrow(/invalid, already used or expired/);
  });

  it('refuses an expired invitation', async () => {
    const user = await inviteUser({ email: 'late@example.test', name: 'Late', role: 'viewer' }, admin);
    const mail = (await MailMessage.findOne({ where: { toAddress: 'late@example.test' } }))!;
    await UserToken.update({ expiresAt: new Date(Date.now() - 1) }, { where: { userId: user.id } });
    await expect(acceptInvitation(linkToken(mail.textBody, 'invite'), 'a long enough password')).rejects.toThrow(/expired/);
    expect(TOKEN_LIFETIME_MS.reset).toBe(3_600_000);
  });
});

describe('password resets', () => {
  it('mails only active accounts, once per period, and the link works once', async () => {
    await requestPasswordReset('nobody@example.test');
    await requestPasswordReset('late@example.test'); // invited, never accepted: inactive
    expect(await MailMessage.count({ where: { kind: 'password-reset' } })).toBe(0);

    await requestPasswordReset('FIELD.ANALYST@example.test');
    await requestPasswordReset('field.analyst@example.test');
    const mails = await MailMessage.findAll({ where: { kind: 'password-reset' } });
    expect(mails).toHaveLength(1);
    const token = linkToken(mails[0].textBody, 'reset');
    await resetPassword(token, 'a brand new passphrase');
    const user = (await User.findOne({ where: { email: 'field.analyst@example.test' } }))!;
    expect(await verifyPassword('a brand new passphrase', user.passwordHash)).toBe(true);
    await expect(resetPassword(token, 'yet another passphrase')).rejects.toThrow(/already used/);
    // The suppressed second request left no live token behind.
    expect(await UserToken.count({ where: { userId: user.id, purpose: 'reset', usedAt: null } })).toBe(0);
  });
});

describe('user administration', () => {
  it('never leaves the product without an active admin', async () => {
    await expect(updateUser(admin.id, { role: 'lead' }, admin)).rejects.toBeInstanceOf(ConflictError);
    await expect(updateUser(admin.id, { active: false }, admin)).rejects.toBeInstanceOf(ConflictError);
    const other = await User.findOne({ where: { email: 'field.analyst@example.test' } });
    expect((await updateUser(other!.id, { role: 'admin' }, admin)).role).toBe('admin');
    expect((await updateUser(admin.id, { role: 'lead' }, admin)).role).toBe('lead');
  });
});
