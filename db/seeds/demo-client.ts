/**
 * The demo seed drives Drumline exactly as its users do: through the HTTP API of the real
 * application (route validation, role checks, services, transactions, e-signatures and
 * audit trail), on an in-process server bound to 127.0.0.1 on a free port. Each demo person
 * signs in with the demo password and gets a cookie of their own.
 */
import type { AddressInfo } from 'node:net';
import type { Server } from 'node:http';
import { createApp } from '../../server/app';
import { DEMO_PASSWORD } from './accounts';

export class DemoApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly details: unknown,
  ) {
    super(message);
    this.name = 'DemoApiError';
  }
}

export interface UploadFile {
  name: string;
  data: Buffer | Uint8Array;
  type?: string;
}

export class DemoSession {
  constructor(
    private readonly base: string,
    readonly username: string,
    private readonly cookie: string,
  ) {}

  /** E-signature credentials: user name and password (valid for the first and any later signing). */
  sig(): { username: string; password: string } {
    return { username: this.username, password: DEMO_PASSWORD };
  }

  private async send<T>(method: string, path: string, body?: BodyInit, json = false): Promise<T> {
    const headers: Record<string, string> = { cookie: this.cookie, accept: 'application/json' };
    if (json) headers['content-type'] = 'application/json';
    const res = await fetch(`${this.base}${path}`, { method, headers, body });
    const text = await res.text();
    let parsed: unknown;
    try {
      parsed = text ? JSON.parse(text) : null;
    } catch {
      parsed = text;
    }
    if (!res.ok) {
      const err = (parsed as { error?: { code?: string; message?: string; details?: unknown } } | null)?.error;
      throw new DemoApiError(
        res.status,
        err?.code ?? 'HTTP_ERROR',
        `${method} ${path} as ${this.username}: ${res.status} ${err?.message ?? text}`,
        err?.details,
      );
    }
    return parsed as T;
  }

  get<T = any>(path: string): Promise<T> {
    return this.send<T>('GET', path);
  }

  post<T = any>(path: string, body: unknown = {}): Promise<T> {
    return this.send<T>('POST', path, JSON.stringify(body), true);
  }

  put<T = any>(path: string, body: unknown): Promise<T> {
    return this.send<T>('PUT', path, JSON.stringify(body), true);
  }

  patch<T = any>(path: string, body: unknown): Promise<T> {
    return this.send<T>('PATCH', path, JSON.stringify(body), true);
  }

  /** Multipart upload: files under `field`, plus plain text fields. */
  upload<T = any>(
    path: string,
    field: string,
    files: UploadFile[],
    fields: Record<string, string | number | undefined> = {},
  ): Promise<T> {
    const form = new FormData();
    for (const [k, v] of Object.entries(fields)) if (v !== undefined) form.append(k, String(v));
    for (const f of files)
      form.append(field, new Blob([new Uint8Array(f.data)], { type: f.type ?? 'application/octet-stream' }), f.name);
    return this.send<T>('POST', path, form);
  }

  async signOut(): Promise<void> {
    await this.post('/api/auth/sign-out');
  }
}

export class DemoApi {
  private constructor(
    private readonly server: Server,
    readonly base: string,
  ) {}

  /** Starts the application on the given database (default: the configured one) on a free loopback port. */
  static async start(database?: string): Promise<DemoApi> {
    const { app } = createApp({ database, config: { signInRateLimit: 10_000 } });
    const server = await new Promise<Server>((resolve) => {
      const s = app.listen(0, '127.0.0.1', () => resolve(s));
    });
    const { port } = server.address() as AddressInfo;
    return new DemoApi(server, `http://127.0.0.1:${port}`);
  }

  async signIn(username: string): Promise<DemoSession> {
    const res = await fetch(`${this.base}/api/auth/sign-in`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', accept: 'application/json' },
      body: JSON.stringify({ username, password: DEMO_PASSWORD }),
    });
    if (!res.ok)
      throw new DemoApiError(
        res.status,
        'SIGN_IN_FAILED',
        `demo sign-in of ${username} failed: ${res.status} ${await res.text()}`,
        null,
      );
    const cookies = res.headers.getSetCookie().map((c) => c.split(';')[0]);
    if (!cookies.length) throw new Error(`demo sign-in of ${username} set no session cookie`);
    return new DemoSession(this.base, username, cookies.join('; '));
  }

  close(): Promise<void> {
    return new Promise((resolve) => this.server.close(() => resolve()));
  }
}
