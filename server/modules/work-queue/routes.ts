/** HTTP edge of the work queue: what awaits the signed-in user, per role. */
import { Router } from 'express';
import { z } from 'zod';
import { getDb } from '../../lib/db';
import type { AppConfig } from '../../lib/config';
import { defineRoute } from '../../lib/http';
import { QUEUE_FULL_ITEMS, QUEUE_ITEMS, workQueueFor } from './service';

export function workQueueRoutes(config: Pick<AppConfig, 'retestNoticeDays'>): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/work-queue',
      summary: 'What awaits the signed-in user, per role',
      description: `Each section lists its first ${QUEUE_ITEMS} items and counts all; ?full=<section key> lists that section whole (up to ${QUEUE_FULL_ITEMS}).`,
      tag: 'testing',
      access: 'authenticated',
      query: z.object({ full: z.string().max(60).optional() }).strict(),
    },
    ({ user, query }) => workQueueFor(getDb(), user, query.full, config.retestNoticeDays),
  );
  return r;
}
