import fs from 'node:fs';
import path from 'node:path';
import { messageHeader, messageText } from '@/lib/mail/sink';

export interface ReceivedMail {
  file: string;
  to: string[];
  subject: string;
  messageId: string;
  text: string;
  raw: string;
}

/** Reads the .eml files the SMTP stand-in wrote (each with its .json envelope), oldest first. */
export function readMailbox(directory: string): ReceivedMail[] {
  if (!fs.existsSync(directory)) return [];
  return fs
    .readdirSync(directory)
    .filter((name) => name.endsWith('.json'))
    .sort()
    .map((name) => {
      const envelope = JSON.parse(fs.readFileSync(path.join(directory, name), 'utf8')) as { to: string[]; file: string };
      const raw = fs.readFileSync(path.join(directory, envelope.file), 'utf8');
      return {
        file: envelope.file,
        to: envelope.to,
        subject: messageHeader(raw, 'Subject'),
        messageId: messageHeader(raw, 'Message-ID'),
        text: messageText(raw),
        raw,
      };
    });
}

export async function waitFor<T>(
  what: string,
  probe: () => Promise<T | null | undefined | false> | T | null | undefined | false,
  timeoutMs = 60_000,
  everyMs = 250,
): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value) return value as T;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, everyMs));
  }
}
