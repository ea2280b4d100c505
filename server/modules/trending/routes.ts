/** HTTP edge of trending: charts and their CSV, signals and their acknowledgement, baselines, review exceptions. */
import { Router } from 'express';
import { z } from 'zod';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { acknowledgeSchema, baselineSchema, chartQuery, overviewQuery, signalListQuery } from './contract';
import { qaOverview } from './overview';
import { reviewExceptions } from './exceptions';
import * as repo from './repo';
import * as service from './service';

const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['qa_manager', 'auditor'] as const };
const LAB = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function trendingRoutes(): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/trending/methods',
      summary: 'Identity-method versions with trended results, and the sources, instruments and operators to filter by',
      tag: 'trending',
      access: READERS,
    },
    () => service.trendOptions(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/trending/chart',
      summary:
        'Individuals and moving-range chart of one figure of one method version, with limits, run-rule hits and signals',
      tag: 'trending',
      access: READERS,
      query: chartQuery,
    },
    ({ query }) => service.chart(getDb(), query),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/trending/chart.csv',
      summary: 'The chart as CSV (formula-safe cells)',
      tag: 'trending',
      access: READERS,
      query: chartQuery,
      produces: 'text/csv',
    },
    async ({ query, res }) => {
      const out = await service.chartCsv(getDb(), query);
      res.status(200);
      res.setHeader('Content-Type', 'text/csv; charset=utf-8');
      res.setHeader('Content-Disposition', `attachment; filename="${out.fileName}"`);
      res.setHeader('Cache-Control', 'no-store');
      res.end(out.csv);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/trending/signals',
      summary: 'Trend signals (open ones by default)',
      tag: 'trending',
      access: READERS,
      query: signalListQuery,
    },
    ({ query }) => repo.listSignals(getDb(), query),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/trending/signals/:id',
      summary: 'One trend signal',
      tag: 'trending',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.getSignal(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/trending/signals/:id/acknowledge',
      summary: 'Acknowledge a trend signal with a comment (audited)',
      tag: 'trending',
      access: QA,
      params: idParams,
      body: acknowledgeSchema,
    },
    ({ params, body, user, ip }) => service.acknowledge(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/trending/scans',
      summary: 'Apply the run rules to every series now (the scan job also runs on its own)',
      tag: 'trending',
      access: QA,
      body: z.object({}).strict(),
    },
    () => service.scanTrends(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/trending/baselines',
      summary: 'Fix the baseline period of a method version’s control limits (audited)',
      tag: 'trending',
      access: QA,
      body: baselineSchema,
      status: 201,
    },
    ({ body, user, ip }) => service.fixBaseline(getDb(), user, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/tests/:id/exceptions',
      summary: 'What is unusual in a test attempt, for the review by exception',
      tag: 'trending',
      access: LAB,
      params: idParams,
    },
    ({ params }) => reviewExceptions(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/qa-overview',
      summary: 'The figures QA reports to management for a period',
      tag: 'trending',
      access: READERS,
      query: overviewQuery,
    },
    ({ query }) => qaOverview(getDb(), query.from, query.to),
  );
  return r;
}
