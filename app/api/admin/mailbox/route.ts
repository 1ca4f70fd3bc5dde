import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { smtpConfigured } from '@/lib/runtime/config';
import { handle } from '@/lib/http/handler';
import { listSinkMessages, messageText } from '@/lib/mail/sink';

/** What the local SMTP stand-in received (newest first, at most 200), with each message's plain text. */
export const GET = handle(async () => {
  await requireRole('admin');
  const items = listSinkMessages()
    .slice(0, 200)
    .map(({ raw, ...message }) => ({ ...message, text: messageText(raw) }));
  return NextResponse.json({ items, total: items.length, smtpConfigured: smtpConfigured() });
});
