/**
 * Contract of the mail pages for administrators: the outbox with delivery status and, in
 * development, the mail the local fake SMTP server captured. Pure types: the client may import it.
 */

/** One message of the outbox (one per recipient). */
export interface OutboxEntry {
  id: number;
  to: string;
  subject: string;
  status: string;
  attempts: number;
  lastError: string | null;
  createdAt: string;
  sentAt: string | null;
}

/** A message the development fake SMTP server captured. */
export interface CapturedMail {
  id: number;
  receivedAt: string;
  from: string;
  to: string[];
  subject: string;
  text: string;
}
