/** The periodic audit-trail review: due date, exception lists, recorded reviews, recording a signed one. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type {
  AuditReview,
  ExceptionLists,
  ReviewDue,
  ReviewInput,
} from '../../../../server/modules/audit-review/contract';

export type {
  AuditReview,
  ExceptionLists,
  ReviewDue,
  ReviewInput,
} from '../../../../server/modules/audit-review/contract';
export { REVIEW_CATEGORIES, REVIEW_CATEGORY_LABELS } from '../../../../server/modules/audit-review/contract';

export function useReviewDue() {
  return useQuery({ queryKey: qk.auditReviews.due, queryFn: () => apiFetch<ReviewDue>('/api/audit-reviews/due') });
}

export function useReviews() {
  return useQuery({ queryKey: qk.auditReviews.list, queryFn: () => apiFetch<AuditReview[]>('/api/audit-reviews') });
}

export function useExceptionLists(from: string, to: string) {
  return useQuery({
    queryKey: qk.auditReviews.exceptions(from, to),
    queryFn: () => apiFetch<ExceptionLists>(`/api/audit-reviews/exceptions?from=${from}&to=${to}`),
    enabled: /^\d{4}-\d{2}-\d{2}$/.test(from) && /^\d{4}-\d{2}-\d{2}$/.test(to) && from <= to,
  });
}

export function useRecordReview() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ReviewInput) => apiFetch<AuditReview>('/api/audit-reviews', { method: 'POST', body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.auditReviews.all });
      void invalidateMe(qc);
    },
  });
}
