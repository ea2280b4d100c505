/** Development only: admins read the mail captured by the local fake SMTP server, and the outbox. */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { AppError } from '../../lib/errors';
import { defineRoute } from '../../lib/http';
import { capturedMail } from '../../lib/fake-smtp';
import type { OutboxEntry } from './contract';

export function mailRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/dev/mail',
      summary: 'Mail captured by the development fake SMTP server',
      tag: 'mail',
      access: { roles: ['admin'] },
    },
    () => {
      if (!config.devMode || config.smtp)
        throw new AppError(
          404,
          'NOT_FOUND',
          'Captured mail exists only in development mode without a real SMTP server.',
        );
      return capturedMail().reverse();
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/mail/outbox',
      summary: 'The e-mail outbox with delivery status (newest first)',
      tag: 'mail',
      access: { roles: ['admin'] },
    },
    async (): Promise<OutboxEntry[]> =>
      (await getDb()('mail_outbox').orderBy('id', 'desc').limit(200)).map((m) => ({
        id: m.id,
        to: m.to_address,
        subject: m.subject,
        status: m.status,
        attempts: m.attempts,
        lastError: m.last_error,
        createdAt: new Date(m.created_at).toISOString(),
        sentAt: m.sent_at ? new Date(m.sent_at).toISOString() : null,
      })),
  );
  return r;
}
