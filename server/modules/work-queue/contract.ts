/** The work queue's response types: per role, what awaits the signed-in user (GET /api/work-queue). */
import type { Role } from '../../lib/contract';

export interface QueueItem {
  id: number;
  title: string;
  detail: string;
  href: string;
  /** An action the queue offers in place (QA's retry of a certificate that could not be issued). */
  action?: { kind: 'issue-certificate'; lotId: number };
}

export interface QueueSection {
  key:
    | 'lots-to-sample'
    | 'lots-to-test'
    | 'tests-to-verify'
    | 'open-investigations'
    | 'lots-awaiting-disposition'
    | 'retests-due'
    | 'references-to-approve'
    | 'instrument-checks-due'
    | 'certificates-to-issue'
    | 'blocked-containers';
  title: string;
  roles: Role[];
  count: number;
  items: QueueItem[];
}

export interface WorkQueue {
  sections: QueueSection[];
}
