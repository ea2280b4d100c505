/**
 * A local fake webhook receiver for development and tests (loopback only): it listens on
 * 127.0.0.1, checks each delivery's Standard Webhooks signature with the endpoint's secret (when it
 * knows it) and keeps what it received. `failNext(n)` makes it answer 503 to the next n requests,
 * to exercise retries. Run it alone with `npx tsx server/lib/fake-webhook-receiver.ts [port]`
 * (the secret from WEBHOOK_SECRET, printed deliveries on stdout).
 */
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import { pathToFileURL } from 'node:url';
import { Webhook } from 'standardwebhooks';

export interface ReceivedHook {
  id: string;
  timestamp: string;
  signature: string;
  body: string;
  /** true: signature valid; false: invalid; null: no secret to check with */
  valid: boolean | null;
  status: number;
}

export interface FakeWebhookReceiver {
  url: string;
  received: ReceivedHook[];
  setSecret(secret: string): void;
  failNext(n: number): void;
  close(): Promise<void>;
}

export async function startFakeWebhookReceiver(port = 0, secret?: string): Promise<FakeWebhookReceiver> {
  let key = secret ?? null;
  let failures = 0;
  const received: ReceivedHook[] = [];
  const server = http.createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      const body = Buffer.concat(chunks).toString('utf8');
      const headers = {
        'webhook-id': String(req.headers['webhook-id'] ?? ''),
        'webhook-timestamp': String(req.headers['webhook-timestamp'] ?? ''),
        'webhook-signature': String(req.headers['webhook-signature'] ?? ''),
      };
      let valid: boolean | null = null;
      if (key) {
        try {
          new Webhook(key).verify(body, headers);
          valid = true;
        } catch {
          valid = false;
        }
      }
      const status = failures > 0 ? 503 : valid === false ? 401 : 204;
      if (failures > 0) failures--;
      received.push({
        id: headers['webhook-id'],
        timestamp: headers['webhook-timestamp'],
        signature: headers['webhook-signature'],
        body,
        valid,
        status,
      });
      res.statusCode = status;
      res.end();
    });
  });
  await new Promise<void>((resolve) => server.listen(port, '127.0.0.1', resolve));
  const addr = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${addr.port}/hooks`,
    received,
    setSecret: (s) => (key = s),
    failNext: (n) => (failures = n),
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const port = Number(process.argv[2] ?? 8090);
  const r = await startFakeWebhookReceiver(port, process.env.WEBHOOK_SECRET);
  console.log(`[fake webhook receiver] listening on ${r.url} (loopback only)`);
  setInterval(() => {
    while (r.received.length) {
      const h = r.received.shift()!;
      console.log(
        `[fake webhook receiver] ${h.id} signature ${h.valid === null ? 'not checked' : h.valid ? 'valid' : 'INVALID'}: ${h.body}`,
      );
    }
  }, 500);
}
