/**
 * The home page's work queue: a list of widgets, each showing real work waiting for the user
 * (lots to measure, tests to verify, references to approve...). Feature helpers APPEND one entry
 * each (additive edit). A widget renders its own content through its TanStack Query hook and,
 * when its list is empty, says so in one line (e.g. "No tests await verification.").
 * The home page shows only widgets whose roles the user holds; with none it says "Nothing awaits you."
 */
import type { ComponentType } from 'react';
import type { Role } from '../lib/roles';
import {
  LotsAwaitingDispositionWidget,
  LotsToSampleWidget,
  LotsToTestWidget,
  OpenInvestigationsWidget,
  RetestsDueWidget,
  BlockedContainersWidget,
  CertificatesToIssueWidget,
  TestsToVerifyWidget,
} from '../routes/testing-widgets';
import {
  InstrumentsCheckDueWidget,
  OpenImpactAssessmentsWidget,
  ReferencesAwaitingApprovalWidget,
} from '../routes/library-widgets';
import { OpenIntegrityAlertsWidget } from '../routes/integrity-widgets';
import { AuditReviewDueWidget, OpenTrendSignalsWidget } from '../routes/trending-widgets';
import {
  AccountsToAttendWidget,
  CertificatesToCheckWidget,
  DecisionsToReviewWidget,
} from '../routes/oversight-widgets';

export interface WorkQueueWidget {
  /** unique key, e.g. 'testing.to-verify' */
  id: string;
  /** heading shown above the widget */
  title: string;
  /** the widget is shown to users holding at least one of these roles */
  roles: Role[];
  /** smaller first */
  order: number;
  Component: ComponentType;
}

export const workQueueWidgets: WorkQueueWidget[] = [
  // Feature widgets: append below, one entry each.
  {
    id: 'trending.open-signals',
    title: 'Open trend signals (early warnings)',
    roles: ['qa_manager'],
    order: 22,
    Component: OpenTrendSignalsWidget,
  },
  {
    id: 'audit-review.due',
    title: 'Periodic audit-trail review',
    roles: ['qa_manager'],
    order: 24,
    Component: AuditReviewDueWidget,
  },
  {
    id: 'instruments.impact-assessments',
    title: 'Failed instrument checks to assess',
    roles: ['qa_manager'],
    order: 19,
    Component: OpenImpactAssessmentsWidget,
  },
  {
    id: 'instruments.check-due',
    title: 'Instruments with a check due',
    roles: ['operator'],
    order: 5,
    Component: InstrumentsCheckDueWidget,
  },
  {
    id: 'library.awaiting-approval',
    title: 'Reference spectra awaiting approval',
    roles: ['qa_manager'],
    order: 30,
    Component: ReferencesAwaitingApprovalWidget,
  },
  {
    id: 'testing.lots-to-sample',
    title: 'Lots to sample',
    roles: ['operator'],
    order: 0,
    Component: LotsToSampleWidget,
  },
  { id: 'testing.lots-to-test', title: 'Lots to test', roles: ['operator'], order: 1, Component: LotsToTestWidget },
  {
    id: 'disposition.awaiting',
    title: 'Lots awaiting disposition',
    roles: ['qa_manager'],
    order: 15,
    Component: LotsAwaitingDispositionWidget,
  },
  {
    id: 'disposition.retests',
    title: 'Retest dates within 30 days',
    roles: ['qa_manager'],
    order: 16,
    Component: RetestsDueWidget,
  },
  { id: 'testing.to-verify', title: 'Tests to verify', roles: ['verifier'], order: 2, Component: TestsToVerifyWidget },
  {
    id: 'testing.blocked-containers',
    title: 'Blocked containers',
    roles: ['qa_manager'],
    order: 19,
    Component: BlockedContainersWidget,
  },
  {
    id: 'investigations.open',
    title: 'Open investigations',
    roles: ['qa_manager'],
    order: 20,
    Component: OpenInvestigationsWidget,
  },
  {
    id: 'oversight.certificates',
    title: 'Identity certificates to check (last 30 days)',
    roles: ['auditor'],
    order: 50,
    Component: CertificatesToCheckWidget,
  },
  {
    id: 'oversight.decisions',
    title: 'GMP decisions to review (last 30 days)',
    roles: ['auditor'],
    order: 51,
    Component: DecisionsToReviewWidget,
  },
  {
    id: 'oversight.accounts',
    title: 'Accounts to attend to',
    roles: ['admin'],
    order: 60,
    Component: AccountsToAttendWidget,
  },
  {
    id: 'integrity.open-alerts',
    title: 'Integrity alerts to sign off',
    roles: ['qa_manager'],
    order: 10,
    Component: OpenIntegrityAlertsWidget,
  },
  {
    id: 'certificates.to-issue',
    title: 'Certificates that could not be issued',
    roles: ['qa_manager'],
    order: 11,
    Component: CertificatesToIssueWidget,
  },
];

export function widgetsFor(roles: readonly Role[]): WorkQueueWidget[] {
  return workQueueWidgets.filter((w) => w.roles.some((r) => roles.includes(r))).sort((a, b) => a.order - b.order);
}
