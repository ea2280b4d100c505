/**
 * Every TanStack Query key of the client, in one place. A feature's hooks read and invalidate
 * only through these factories, so one feature's write can refresh another feature's view (a
 * verification refreshes lots, investigations and the work queue) without either importing the
 * other. Keys are arrays whose first element names the area; invalidating `qk.x.all` refreshes
 * everything of that area.
 *
 * The signed-in user (/api/auth/me) is read by the shell and changes when a feature signs
 * something (signedOnce): such a feature calls invalidateMe.
 */
import type { QueryClient } from '@tanstack/react-query';

export const qk = {
  me: ['auth', 'me'] as const,
  audit: {
    all: ['audit'] as const,
    events: (filter: Record<string, string | number>, cursor: string | null, limit: number) =>
      ['audit', 'events', filter, cursor, limit] as const,
    event: (id: number | null) => ['audit', 'event', id] as const,
    facets: ['audit', 'facets'] as const,
    chain: ['audit', 'verify'] as const,
    fullCheck: (id: number | null) => ['audit', 'verify', 'full', id] as const,
    history: (entityType: string, entityId: string) => ['audit', 'history', entityType, entityId] as const,
  },
  certificates: {
    all: ['certificates'] as const,
    list: (filter: object) => ['certificates', 'list', filter] as const,
    ofLot: (lotId: number | undefined) => ['certificates', 'lot', lotId] as const,
    one: (id: number) => ['certificates', 'one', id] as const,
    signingIdentity: ['certificates', 'signing-identity'] as const,
  },
  instruments: {
    all: ['instruments'] as const,
    one: (id: number) => ['instruments', id] as const,
    /** impact assessments of failed checks sit under the instruments, so a new check refreshes them */
    impacts: ['instruments', 'impact-assessments'] as const,
    lotNotices: (lotId: number) => ['instruments', 'impact-notices', lotId] as const,
    /** export-folder intake (docs/instrument-intake.md) */
    intake: (id: number) => ['instruments', id, 'intake'] as const,
    acquisitions: (id: number) => ['instruments', id, 'acquisitions'] as const,
    testAcquisitions: (testId: number) => ['instruments', 'test-acquisitions', testId] as const,
  },
  investigations: {
    all: ['investigations'] as const,
    list: (state: string) => ['investigations', 'list', state] as const,
    one: (id: number) => ['investigations', id] as const,
  },
  library: {
    all: ['library'] as const,
    materials: ['library', 'materials'] as const,
    material: (id: number) => ['library', 'material', id] as const,
    references: (materialId: number) => ['library', 'references', materialId] as const,
    byStatus: (status: string) => ['library', 'references-by-status', status] as const,
    reference: (id: number) => ['library', 'reference', id] as const,
    overlay: (id: number) => ['library', 'overlay', id] as const,
    gate: (id: number) => ['library', 'gate', id] as const,
    matrix: (technique: string) => ['library', 'matrix', technique] as const,
  },
  lots: {
    all: ['lots'] as const,
    list: (filter: object) => ['lots', filter] as const,
    one: (id: number) => ['lots', id] as const,
    receivable: ['lots', 'receivable'] as const,
  },
  tests: {
    /** A test, its review and everything under it. */
    one: (id: number) => ['tests', id] as const,
    review: (id: number) => ['tests', id, 'review'] as const,
    handOverCandidates: (id: number) => ['tests', id, 'hand-over-candidates'] as const,
    blockedContainers: ['testing', 'blocked-containers'] as const,
    instruments: ['testing', 'instruments'] as const,
    verificationQueue: ['verification', 'queue'] as const,
  },
  measurements: {
    one: (id: number) => ['measurements', id] as const,
    plot: (id: number) => ['measurements', id, 'plot'] as const,
  },
  users: { all: ['users'] as const, roleChanges: ['users', 'role-changes'] as const },
  integrity: {
    all: ['integrity'] as const,
    alerts: (status: string) => ['integrity', 'alerts', status] as const,
    alertsAll: ['integrity', 'alerts'] as const,
    alert: (id: number) => ['integrity', 'alert', id] as const,
    runs: ['integrity', 'runs'] as const,
    record: (type: string, id: number) => ['integrity', 'record', type, id] as const,
  },
  suppliers: {
    all: ['suppliers'] as const,
    list: ['suppliers', 'list'] as const,
    sources: (materialId: number | null) => ['suppliers', 'sources', materialId] as const,
  },
  disposition: {
    all: ['disposition'] as const,
    lot: (lotId: number) => ['disposition', 'lot', lotId] as const,
    profile: (materialId: number) => ['disposition', 'profile', materialId] as const,
    profiles: ['disposition', 'profiles'] as const,
  },
  integration: {
    all: ['integration'] as const,
    accounts: ['integration', 'accounts'] as const,
    webhooks: ['integration', 'webhooks'] as const,
    deliveries: ['integration', 'deliveries'] as const,
  },
  trending: {
    all: ['trending'] as const,
    methods: ['trending', 'methods'] as const,
    chart: (filter: object) => ['trending', 'chart', filter] as const,
    signals: (status: string) => ['trending', 'signals', status] as const,
    signal: (id: number) => ['trending', 'signal', id] as const,
    exceptions: (testId: number) => ['trending', 'exceptions', testId] as const,
    overview: (from: string, to: string) => ['trending', 'overview', from, to] as const,
  },
  auditReviews: {
    all: ['audit-reviews'] as const,
    list: ['audit-reviews', 'list'] as const,
    one: (id: number) => ['audit-reviews', id] as const,
    due: ['audit-reviews', 'due'] as const,
    exceptions: (from: string, to: string) => ['audit-reviews', 'exceptions', from, to] as const,
  },
  workQueue: ['work-queue'] as const,
};

/** Call after any e-signature so the next signing knows the user name was already given. */
export function invalidateMe(qc: QueryClient): Promise<void> {
  return qc.invalidateQueries({ queryKey: qk.me });
}
