import type { AddressInfo } from 'node:net';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import type { Db } from '../db/client.js';
import { storeOutboxMessage } from './outbox-repository.js';

export interface MailStandIn {
  /** The port actually bound (useful with port 0). */
  port: number;
  close(): Promise<void>;
}

function addresses(a: AddressObject | AddressObject[] | undefined): string {
  if (!a) return '';
  return (Array.isArray(a) ? a : [a]).map((x) => x.text).join(', ');
}

/**
 * The local stand-in for a mail provider: an SMTP server on 127.0.0.1 that accepts
 * everything and stores each parsed message in outbox_messages. The message is stored
 * before the server answers 250, so once sendMail resolves the row is there.
 * No TLS and no authentication: it only listens on the loopback interface.
 */
export function startMailStandIn(opts: { port: number; db: Db; host?: string }): Promise<MailStandIn> {
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    banner: 'Poleward local mail stand-in',
    size: 5 * 1024 * 1024,
    logger: false,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((mail) =>
          storeOutboxMessage(opts.db, {
            fromAddress: addresses(mail.from) || session.envelope.mailFrom?.toString() || '',
            toAddress: addresses(mail.to) || session.envelope.rcptTo.map((r) => r.address).join(', '),
            subject: mail.subject ?? '',
            textBody: mail.text ?? '',
            htmlBody: typeof mail.html === 'string' ? mail.html : null,
          }),
        )
        .then(
          () => callback(),
          (err: Error) => callback(err),
        );
    },
  });
  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(opts.port, opts.host ?? '127.0.0.1', () => {
      server.off('error', reject);
      server.on('error', (err) => console.error('[mail stand-in]', err.message));
      resolve({
        port: (server.server.address() as AddressInfo).port,
        close: () => new Promise<void>((done) => server.close(() => done())),
      });
    });
  });
}
