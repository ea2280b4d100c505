/**
 * Pages of the signed-in app. Feature helpers APPEND one entry per page (additive edits only).
 *   path:    absolute path ('/lots/:id')
 *   element: usually lazyPage(() => import('../routes/<page>'))
 *   roles:   who may open it (undefined = any signed-in user). The server enforces roles too;
 *            this only hides navigation and shows a plain refusal instead of a broken page.
 *   nav:     present = listed in the navigation under its group, sorted by order.
 *            groups: 'bench' (operator/verifier work), 'desk' (QA, auditor), 'admin'.
 * Pages outside the shell (sign-in) live in router.tsx.
 */
import type { ReactNode } from 'react';
import type { Role } from '../lib/roles';
import { lazyPage } from './lazy-page';

export type NavGroup = 'bench' | 'desk' | 'admin';

export interface AppRoute {
  path: string;
  element: ReactNode;
  roles?: Role[];
  nav?: { label: string; group: NavGroup; order: number };
  /** bench pages get larger type and targets from the shell */
  bench?: boolean;
}

export const NAV_GROUP_LABELS: Record<NavGroup, string> = {
  bench: 'Bench',
  desk: 'Review and records',
  admin: 'Administration',
};

export const appRoutes: AppRoute[] = [
  // The home page (work queue) is always first in the navigation, outside the groups.
  { path: '/', element: lazyPage(() => import('../routes/home')) },
  { path: '/account/password', element: lazyPage(() => import('../routes/change-password')) },
  {
    path: '/admin/users',
    element: lazyPage(() => import('../routes/admin-users')),
    roles: ['admin'],
    nav: { label: 'User accounts', group: 'admin', order: 10 },
  },
  // Feature pages: append below, one line each.
  {
    path: '/master-data',
    element: lazyPage(() => import('../routes/master-data')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    nav: { label: 'Suppliers and materials', group: 'desk', order: 22 },
  },
  {
    path: '/admin/integration',
    element: lazyPage(() => import('../routes/admin-integration')),
    roles: ['admin'],
    nav: { label: 'ERP link', group: 'admin', order: 20 },
  },
  {
    path: '/trending',
    element: lazyPage(() => import('../routes/trending')),
    roles: ['qa_manager', 'auditor'],
    nav: { label: 'Trends', group: 'desk', order: 32 },
  },
  {
    path: '/trending/signals/:id',
    element: lazyPage(() => import('../routes/trend-signal')),
    roles: ['qa_manager', 'auditor'],
  },
  {
    path: '/qa-overview',
    element: lazyPage(() => import('../routes/qa-overview')),
    roles: ['qa_manager', 'auditor'],
    nav: { label: 'QA overview', group: 'desk', order: 33 },
  },
  {
    path: '/audit-reviews',
    element: lazyPage(() => import('../routes/audit-reviews')),
    roles: ['qa_manager', 'auditor'],
    nav: { label: 'Audit-trail reviews', group: 'desk', order: 62 },
  },
  {
    path: '/library',
    element: lazyPage(() => import('../routes/library')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    nav: { label: 'Reference library', group: 'desk', order: 20 },
  },
  {
    path: '/library/materials/:id',
    element: lazyPage(() => import('../routes/library-material')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
  },
  {
    path: '/library/references/:id',
    element: lazyPage(() => import('../routes/library-reference')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
  },
  {
    path: '/instruments',
    element: lazyPage(() => import('../routes/instruments')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    nav: { label: 'Instruments', group: 'bench', order: 5 },
  },
  {
    path: '/instruments/:id',
    element: lazyPage(() => import('../routes/instrument')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
  },
  {
    path: '/certificates',
    element: lazyPage(() => import('../routes/certificates')),
    nav: { label: 'Identity certificates', group: 'desk', order: 40 },
  },
  {
    path: '/certificates/verify',
    element: lazyPage(() => import('../routes/certificate-verify')),
    nav: { label: 'Verify a certificate', group: 'desk', order: 41 },
  },
  { path: '/certificates/:id', element: lazyPage(() => import('../routes/certificate')) },
  {
    path: '/audit',
    element: lazyPage(() => import('../routes/audit')),
    roles: ['auditor', 'qa_manager', 'admin'],
    nav: { label: 'Audit trail', group: 'desk', order: 60 },
  },
  {
    path: '/lots',
    element: lazyPage(() => import('../routes/lots')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    nav: { label: 'Lots and testing', group: 'bench', order: 1 },
    bench: true,
  },
  {
    path: '/lots/:id',
    element: lazyPage(() => import('../routes/lot')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    bench: true,
  },
  {
    path: '/verification',
    element: lazyPage(() => import('../routes/verification')),
    roles: ['verifier'],
    nav: { label: 'Tests to verify', group: 'bench', order: 2 },
    bench: true,
  },
  {
    path: '/tests/:id/review',
    element: lazyPage(() => import('../routes/test-review')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    bench: true,
  },
  {
    path: '/investigations',
    element: lazyPage(() => import('../routes/investigations')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
    nav: { label: 'Investigations', group: 'desk', order: 30 },
  },
  {
    path: '/investigations/:id',
    element: lazyPage(() => import('../routes/investigation')),
    roles: ['operator', 'verifier', 'qa_manager', 'auditor'],
  },
  {
    path: '/integrity',
    element: lazyPage(() => import('../routes/integrity')),
    roles: ['qa_manager', 'auditor'],
    nav: { label: 'Data integrity', group: 'desk', order: 62 },
  },
  {
    path: '/integrity/alerts/:id',
    element: lazyPage(() => import('../routes/integrity-alert')),
    roles: ['qa_manager', 'auditor'],
  },
];
