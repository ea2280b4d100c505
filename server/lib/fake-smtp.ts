/** A local SMTP server on loopback that captures messages in memory (development and tests only). */
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import type { CapturedMail } from '../modules/mail/contract';

const captured: CapturedMail[] = [];
let server: SMTPServer | null = null;
let boundPort = 0;

export function capturedMail(): CapturedMail[] {
  return captured.slice();
}

export async function startFakeSmtp(port = 0): Promise<number> {
  if (server) return boundPort;
  server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    // Addresses under the reserved .invalid domain are refused, so tests can exercise failed delivery.
    onRcptTo(address, _session, cb) {
      if (address.address.toLowerCase().endsWith('.invalid')) return cb(new Error('550 mailbox unavailable'));
      cb();
    },
    onData(stream, session, cb) {
      simpleParser(stream)
        .then((m) => {
          captured.push({
            id: captured.length + 1,
            receivedAt: new Date().toISOString(),
            from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
            to: session.envelope.rcptTo.map((r) => r.address),
            subject: m.subject ?? '',
            text: m.text ?? '',
          });
          cb();
        })
        .catch((e) => cb(e));
    },
  });
  await new Promise<void>((resolve, reject) => {
    server!.once('error', reject);
    server!.listen(port, '127.0.0.1', () => resolve());
  });
  const addr = (server as unknown as { server: { address(): { port: number } } }).server.address();
  boundPort = addr.port;
  return boundPort;
}
