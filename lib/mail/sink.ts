import fs from 'node:fs';
import path from 'node:path';
import { SMTPServer } from 'smtp-server';
import { mailboxDir } from '@/lib/config';

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

/** Messages the sink holds, newest first. */
export function listSinkMessages(directory = mailboxDir()): (SinkMessage & { raw: string })[] {
  if (!fs.existsSync(directory)) return [];
  return fs
    .readdirSync(directory)
    .filter((name) => name.endsWith('.json'))
    .map((name) => JSON.parse(fs.readFileSync(path.join(directory, name), 'utf8')) as SinkMessage)
    .sort((a, b) => (a.receivedAt < b.receivedAt ? 1 : -1))
    .map((message) => ({ ...message, raw: fs.readFileSync(path.join(directory, message.file), 'utf8') }));
}
