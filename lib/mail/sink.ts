import fs from 'node:fs';
import path from 'node:path';
import { SMTPServer } from 'smtp-server';
import { mailboxDir } from '@/lib/runtime/config';

export interface SinkMessage {
  id: string;
  receivedAt: string;
  from: string;
  to: string[];
  file: string;
}

/**
 * The local stand-in for a hosted mail service: an SMTP server on loopback that accepts every message and keeps
 * it as an .eml file (plus a JSON envelope) in DATA_DIR/mailbox, where admins read it on the mailbox page.
 */
export function startMailSink(port: number, directory = mailboxDir()): Promise<SMTPServer> {
  fs.mkdirSync(directory, { recursive: true });
  let counter = 0;
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS'],
    banner: 'Brinkwatch local mail sink',
    size: 10 * 1024 * 1024,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (chunk: Buffer) => chunks.push(chunk));
      stream.on('end', () => {
        const id = `${Date.now()}-${process.pid}-${++counter}`;
        const file = `${id}.eml`;
        fs.writeFileSync(path.join(directory, file), Buffer.concat(chunks));
        const envelope: SinkMessage = {
          id,
          receivedAt: new Date().toISOString(),
          from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
          to: session.envelope.rcptTo.map((r) => r.address),
          file,
        };
        fs.writeFileSync(path.join(directory, `${id}.json`), JSON.stringify(envelope));
        callback();
      });
    },
  });
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(port, '127.0.0.1', () => resolve(server));
  });
}

/**
 * Decodes RFC 2047 encoded words (=?charset?B|Q?text?=), which nodemailer uses for non-ASCII subjects; adjacent
 * encoded words separated only by white space join without it (RFC 2047, Sec. 6.2). O(length).
 */
export function decodeEncodedWords(value: string): string {
  return value
    .replace(/(=\?[^?]+\?[BbQq]\?[^?]*\?=)\s+(?==\?)/g, '$1')
    .replace(/=\?([^?]+)\?([BbQq])\?([^?]*)\?=/g, (_, charset: string, encoding: string, text: string) => {
      const bytes =
        encoding.toUpperCase() === 'B'
          ? Buffer.from(text, 'base64')
          : Buffer.from(
              text.replace(/_/g, ' ').replace(/=([0-9A-Fa-f]{2})/g, (_m, hex: string) => String.fromCharCode(parseInt(hex, 16))),
              'latin1',
            );
      return new TextDecoder(/^utf-?8$/i.test(charset) ? 'utf-8' : charset).decode(bytes);
    });
}

/** One header of a raw message (unfolded and decoded), or '' when absent. */
export function messageHeader(raw: string, name: string): string {
  const head = raw.split(/\r?\n\r?\n/, 1)[0].replace(/\r?\n[ \t]+/g, ' ');
  const line = head.split(/\r?\n/).find((l) => l.toLowerCase().startsWith(`${name.toLowerCase()}:`));
  return line ? decodeEncodedWords(line.slice(name.length + 1).trim()) : '';
}

function decodeBody(body: string, encoding: string): string {
  if (/^base64$/i.test(encoding)) return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8');
  if (/^quoted-printable$/i.test(encoding)) {
    const latin = body.replace(/=\r?\n/g, '').replace(/=([0-9A-Fa-f]{2})/g, (_m, hex: string) => String.fromCharCode(parseInt(hex, 16)));
    return Buffer.from(latin, 'latin1').toString('utf8');
  }
  return body;
}

/**
 * The text/plain content of a raw message, transfer encoding undone (quoted-printable, RFC 2045 Sec. 6.7; base64,
 * Sec. 6.8). Looks one level into multipart messages, which is how nodemailer writes text + HTML. O(length).
 */
export function messageText(raw: string): string {
  const [head, ...rest] = raw.split(/\r?\n\r?\n/);
  const body = rest.join('\r\n\r\n');
  const boundary = /boundary="?([^";\r\n]+)"?/i.exec(messageHeader(head, 'Content-Type'))?.[1];
  if (!boundary) return decodeBody(body, messageHeader(head, 'Content-Transfer-Encoding'));
  for (const part of body.split(`--${boundary}`)) {
    const [partHead, ...partRest] = part.replace(/^\r?\n/, '').split(/\r?\n\r?\n/);
    if (/^text\/plain/i.test(messageHeader(partHead, 'Content-Type'))) {
      return decodeBody(partRest.join('\r\n\r\n').replace(/\r?\n$/, ''), messageHeader(partHead, 'Content-Transfer-Encoding'));
    }
  }
  return '';
}

/** Messages the sink holds, newest first. */
export function listSinkMessages(directory = mailboxDir()): (SinkMessage & { subject: string; raw: string })[] {
  if (!fs.existsSync(directory)) return [];
  return fs
    .readdirSync(directory)
    .filter((name) => name.endsWith('.json'))
    .map((name) => JSON.parse(fs.readFileSync(path.join(directory, name), 'utf8')) as SinkMessage)
    .sort((a, b) => (a.receivedAt < b.receivedAt ? 1 : -1))
    .map((message) => {
      const raw = fs.readFileSync(path.join(directory, message.file), 'utf8');
      return { ...message, subject: messageHeader(raw, 'Subject'), raw };
    });
}
