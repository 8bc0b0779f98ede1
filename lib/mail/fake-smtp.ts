import { SMTPServer } from 'smtp-server';
import type { AddressInfo } from 'node:net';
import { getDb } from '@/db/client';
import { outbox } from '@/db/schema';
import { parseMessage } from './parse-message';

const holder = globalThis as typeof globalThis & { __trenchantFakeSmtp?: Promise<{ port: number; close: () => Promise<void> }> };

/** Largest message kept, bytes; the app only sends short invitations. */
const MAX_MESSAGE_BYTES = 1_000_000;

/**
 * Starts the development SMTP server on 127.0.0.1 (port TRENCHANT_FAKE_SMTP_PORT, default a free one) that
 * accepts any message without authentication and stores it in the `outbox` table. Idempotent per process.
 * Never used when SMTP_URL is set.
 */
export function startFakeSmtp(): Promise<{ port: number; close: () => Promise<void> }> {
  holder.__trenchantFakeSmtp ??= new Promise((resolve, reject) => {
    const server = new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS', 'AUTH'],
      banner: 'Trenchant development mail catcher',
      size: MAX_MESSAGE_BYTES,
      logger: false,
      onData(stream, session, callback) {
        const chunks: Buffer[] = [];
        stream.on('data', (c: Buffer) => chunks.push(c));
        stream.on('error', callback);
        stream.on('end', () => {
          try {
            const raw = Buffer.concat(chunks).toString('utf8');
            const msg = parseMessage(raw);
            const from = session.envelope.mailFrom ? session.envelope.mailFrom.address : msg.from;
            const to = session.envelope.rcptTo.map((r) => r.address).join(', ') || msg.to;
            getDb()
              .insert(outbox)
              .values({ receivedAt: new Date(), teamId: msg.teamId, fromAddress: from, toAddresses: to, subject: msg.subject, body: msg.body, raw })
              .run();
            callback();
          } catch (error) {
            console.error('[trenchant] development mail could not be stored:', error);
            callback(new Error('could not store message'));
          }
        });
      },
    });
    server.on('error', (error) => console.error('[trenchant] development SMTP server error:', error.message));
    const port = Number(process.env.TRENCHANT_FAKE_SMTP_PORT ?? 0) || 0;
    server.listen(port, '127.0.0.1', () => {
      const address = server.server.address() as AddressInfo;
      resolve({ port: address.port, close: () => new Promise<void>((r) => server.close(() => r())) });
    });
    server.server.once('error', reject);
  });
  return holder.__trenchantFakeSmtp;
}
