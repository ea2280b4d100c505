/**
 * Webhook endpoints and the delivery state (administrator, desk screen): each endpoint with its
 * events and counts; each delivery with its attempts, next attempt and last error. A new endpoint
 * shows its signing secret once.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { InputField } from '../../../components/Field';
import { QueryState } from '../../../components/QueryState';
import {
  WEBHOOK_EVENTS,
  useCreateWebhook,
  useDeactivateWebhook,
  useDeliveries,
  useWebhooks,
  webhookCreateSchema,
  type WebhookEvent,
} from '../api';
import { Choices, CreateFooter, ListPanel, NewRecordFields, ShownOnce, useCreateShownOnce } from './parts';

const STATE_WORDS = { pending: 'Pending', delivered: 'Delivered', failed: 'Gave up' } as const;

export function Webhooks() {
  const q = useWebhooks();
  const deliveries = useDeliveries();
  const create = useCreateWebhook();
  const deactivate = useDeactivateWebhook();
  const [name, setName] = useState('');
  const [url, setUrl] = useState('');
  const [events, setEvents] = useState<WebhookEvent[]>([...WEBHOOK_EVENTS]);
  const {
    problem,
    submit: send,
    once: secret,
    dismiss,
  } = useCreateShownOnce(webhookCreateSchema, create, (w) => ({ name: w.name, secret: w.secret }));

  const submit = () =>
    send({ name, url, events }, () => {
      setName('');
      setUrl('');
    });

  return (
    <ListPanel id="webhooks" title="Webhooks">
      {secret && (
        <ShownOnce
          testId="secret-once"
          heading={`Signing secret of ${secret.name} (HMAC-SHA256): give it to the receiver now. It is shown once.`}
          value={secret.secret}
          stored="I have stored the secret"
          onDismiss={dismiss}
        />
      )}
      <QueryState
        query={q}
        loading={<p className="text-sm text-muted">Loading webhooks…</p>}
        empty={<p className="text-sm text-muted">No webhook endpoint yet.</p>}
      >
        {(hooks) => (
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
              {hooks.map((w) => (
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
      </QueryState>
      <NewRecordFields title="New endpoint">
        <InputField id="wh-name" label="Name" value={name} onChange={(e) => setName(e.target.value)} />
        <InputField
          id="wh-url"
          label="Receiver URL (https; http only on this machine)"
          value={url}
          onChange={(e) => setUrl(e.target.value)}
        />
        <Choices
          legend="Events"
          choices={WEBHOOK_EVENTS}
          value={events}
          onChange={setEvents}
          className="md:col-span-2"
          inline
        />
      </NewRecordFields>
      <CreateFooter problem={problem} mutation={create} onSubmit={submit}>
        Add endpoint and show its secret
      </CreateFooter>

      <h3 className="mt-5 mb-2 font-medium">Delivery state</h3>
      <QueryState
        query={deliveries}
        loading={<p className="text-sm text-muted">Loading deliveries…</p>}
        empty={<p className="text-sm text-muted">Nothing sent yet.</p>}
      >
        {(sent) => (
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
              {sent.slice(0, 200).map((d) => (
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
      </QueryState>
    </ListPanel>
  );
}
