/**
 * Webhook endpoints and the delivery state (administrator, desk screen): each endpoint with its
 * events and counts; each delivery with its attempts, next attempt and last error. A new endpoint
 * shows its signing secret once.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input } from '../../../components/Field';
import { errorMessage } from '../../../lib/api';
import {
  WEBHOOK_EVENTS,
  useCreateWebhook,
  useDeactivateWebhook,
  useDeliveries,
  useWebhooks,
  webhookCreateSchema,
  type WebhookEvent,
} from '../api';

const STATE_WORDS = { pending: 'Pending', delivered: 'Delivered', failed: 'Gave up' } as const;

export function Webhooks() {
  const q = useWebhooks();
  const deliveries = useDeliveries();
  const create = useCreateWebhook();
  const deactivate = useDeactivateWebhook();
  const [name, setName] = useState('');
  const [url, setUrl] = useState('');
  const [events, setEvents] = useState<WebhookEvent[]>([...WEBHOOK_EVENTS]);
  const [problem, setProblem] = useState<string | null>(null);
  const [secret, setSecret] = useState<{ name: string; secret: string } | null>(null);

  const submit = () => {
    const parsed = webhookCreateSchema.safeParse({ name, url, events });
    if (!parsed.success) {
      setProblem(parsed.error.issues[0]?.message ?? 'Check the form.');
      return;
    }
    setProblem(null);
    create.mutate(parsed.data, {
      onSuccess: (w) => {
        setSecret({ name: w.name, secret: w.secret });
        setName('');
        setUrl('');
      },
    });
  };

  return (
    <section aria-labelledby="webhooks" className="rounded-md border border-line bg-white p-4">
      <h2 id="webhooks" className="mb-2 text-lg">
        Webhooks
      </h2>
      {secret && (
        <div className="mb-3 rounded-md border border-amber/50 bg-amber-soft p-3 text-sm" data-testid="secret-once">
          <p className="font-medium text-amber-ink">
            Signing secret of {secret.name} (HMAC-SHA256): give it to the receiver now. It is shown once.
          </p>
          <code className="break-all">{secret.secret}</code>
          <div className="mt-2">
            <Button size="desk" onClick={() => setSecret(null)}>
              I have stored the secret
            </Button>
          </div>
        </div>
      )}
      {q.isPending ? (
        <p className="text-sm text-muted">Loading webhooks…</p>
      ) : q.isError ? (
        <ErrorNote error={q.error} onRetry={() => void q.refetch()} />
      ) : q.data.length === 0 ? (
        <p className="text-sm text-muted">No webhook endpoint yet.</p>
      ) : (
        <table className="mb-4 w-full text-sm">
          <thead>
            <tr className="text-left text-muted">
              <th className="py-1" data-key-column="name">
                Name
              </th>
              <th>Receiver</th>
              <th>Events</th>
              <th>Deliveries</th>
              <th data-key-column="state">State</th>
            </tr>
          </thead>
          <tbody>
            {q.data.map((w) => (
              <tr key={w.id} className="border-t border-line align-top" data-testid={`webhook-${w.name}`}>
                <td className="py-1 font-medium">{w.name}</td>
                <td className="break-all">{w.url}</td>
                <td>{w.events.join(', ')}</td>
                <td className="tabular-nums">
                  {w.deliveries.delivered} delivered · {w.deliveries.pending} pending · {w.deliveries.failed} gave up
                </td>
                <td>
                  {w.deactivatedAt ? (
                    <span>
                      Stopped <DateTime value={w.deactivatedAt} />
                    </span>
                  ) : (
                    <Button size="desk" disabled={deactivate.isPending} onClick={() => deactivate.mutate(w.id)}>
                      Stop sending
                    </Button>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      <h3 className="mb-2 font-medium">New endpoint</h3>
      <div className="grid gap-3 md:grid-cols-2">
        <Field id="wh-name" label="Name">
          <Input id="wh-name" value={name} onChange={(e) => setName(e.target.value)} />
        </Field>
        <Field id="wh-url" label="Receiver URL (https; http only on this machine)">
          <Input id="wh-url" value={url} onChange={(e) => setUrl(e.target.value)} />
        </Field>
        <fieldset className="text-sm md:col-span-2">
          <legend className="mb-1 font-medium">Events</legend>
          <div className="flex flex-wrap gap-3">
            {WEBHOOK_EVENTS.map((ev) => (
              <label key={ev} className="flex items-center gap-2">
                <input
                  type="checkbox"
                  checked={events.includes(ev)}
                  onChange={(e) => setEvents(e.target.checked ? [...events, ev] : events.filter((x) => x !== ev))}
                />
                {ev}
              </label>
            ))}
          </div>
        </fieldset>
      </div>
      {(problem || create.isError) && (
        <p className="mt-2 text-sm text-fail" role="alert">
          {problem ?? errorMessage(create.error)}
        </p>
      )}
      <Button className="mt-3" size="desk" variant="primary" disabled={create.isPending} onClick={submit}>
        Add endpoint and show its secret
      </Button>

      <h3 className="mt-5 mb-2 font-medium">Delivery state</h3>
      {deliveries.isPending ? (
        <p className="text-sm text-muted">Loading deliveries…</p>
      ) : deliveries.isError ? (
        <ErrorNote error={deliveries.error} onRetry={() => void deliveries.refetch()} />
      ) : deliveries.data.length === 0 ? (
        <p className="text-sm text-muted">Nothing sent yet.</p>
      ) : (
        <table className="w-full text-sm" data-testid="deliveries">
          <thead>
            <tr className="text-left text-muted">
              <th className="py-1" data-key-column="event">
                Event
              </th>
              <th>Endpoint</th>
              <th data-key-column="state">State</th>
              <th>Attempts</th>
              <th>Next attempt</th>
              <th>Last answer or error</th>
            </tr>
          </thead>
          <tbody>
            {deliveries.data.slice(0, 200).map((d) => (
              <tr key={d.id} className="border-t border-line align-top">
                <td className="py-1">
                  {d.eventType} <span className="text-muted">({d.messageId})</span>
                </td>
                <td>{d.endpointName}</td>
                <td className={d.status === 'failed' ? 'text-fail' : ''}>{STATE_WORDS[d.status]}</td>
                <td className="tabular-nums">{d.attempts}</td>
                <td>{d.status === 'pending' && d.nextAttemptAt ? <DateTime value={d.nextAttemptAt} /> : '—'}</td>
                <td>{d.lastError ?? (d.lastStatusCode ? `HTTP ${d.lastStatusCode}` : '—')}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </section>
  );
}
