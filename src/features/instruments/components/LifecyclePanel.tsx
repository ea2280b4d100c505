/**
 * An instrument's life: in or out of service (the bench takes it out with a reason; QA puts it
 * back, signed), its qualification records (QA, signed) and its maintenance log (the bench).
 * Every record is kept; a correction is a new entry.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { Dialog } from '../../../components/Dialog';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Select, Textarea } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { SignatureDialog } from '../../../components/SignatureDialog';
import {
  CHECK_TYPE_LABELS,
  MAINTENANCE_KINDS,
  QUALIFICATION_STAGE_LABELS,
  QUALIFICATION_STAGES,
  QUALIFICATION_STATUSES,
  useBackInService,
  useOutOfService,
  useRecordMaintenance,
  useRecordQualification,
  type InstrumentDetail,
} from '../api';

type Me = { fullName: string; signedOnce: boolean };

export function ServiceBanner({
  instrument: i,
  canBench,
  isQa,
  me,
}: {
  instrument: InstrumentDetail;
  canBench: boolean;
  isQa: boolean;
  me: Me;
}) {
  const out = useOutOfService();
  const back = useBackInService();
  const [taking, setTaking] = useState(false);
  const [returning, setReturning] = useState(false);
  const [reason, setReason] = useState('');
  const last = i.serviceEvents[0];
  const missing = i.required.filter((r) => !r.valid).map((r) => CHECK_TYPE_LABELS[r.checkType]);
  return (
    <section aria-label="Service state" className="mb-4 flex flex-col gap-2" data-testid="service-state">
      {i.serviceState === 'out-of-service' ? (
        <p role="status" className="rounded-md border border-fail/40 bg-white px-3 py-2 text-sm">
          <strong>Out of service</strong> since <DateTime value={last?.recordedAt ?? i.updatedAt} /> (
          {last?.recordedByName}
          ): “{last?.reason}”. No test starts or measures on it until QA puts it back and every required check passes
          again.
        </p>
      ) : (
        missing.length > 0 && <p className="text-sm text-muted">Checks needed before testing: {missing.join(', ')}.</p>
      )}
      <div className="flex flex-wrap gap-2">
        {canBench && i.serviceState === 'in-service' && (
          <Button variant="danger" onClick={() => (setReason(''), setTaking(true))}>
            Take out of service
          </Button>
        )}
        {isQa && i.serviceState === 'out-of-service' && (
          <Button onClick={() => setReturning(true)}>Put back into service</Button>
        )}
      </div>
      <Dialog
        open={taking}
        title={`Take ${i.name} out of service`}
        description="Tests cannot start or take measurements on it until QA puts it back."
        onClose={() => setTaking(false)}
        busy={out.isPending}
      >
        <Field id="oos-reason" label="Reason" hint="What is wrong, and who was told (at least 10 characters).">
          <Textarea id="oos-reason" value={reason} onChange={(e) => setReason(e.target.value)} />
        </Field>
        {out.error && <ErrorNote error={out.error} />}
        <div className="flex justify-end gap-2">
          <Button onClick={() => setTaking(false)}>Cancel</Button>
          <Button
            variant="danger"
            disabled={out.isPending}
            onClick={() => out.mutate({ id: i.id, reason: reason.trim() }, { onSuccess: () => setTaking(false) })}
          >
            Take out of service
          </Button>
        </div>
      </Dialog>
      {isQa && (
        <ReasonSignatureDialog
          open={returning}
          title={`Put ${i.name} back into service`}
          meaningText={`release ${i.name} for use; every required check must pass again before testing`}
          printedName={me.fullName}
          needsUsername={!me.signedOnce}
          confirmLabel="Sign and put back"
          busy={back.isPending}
          error={back.error}
          reason={{
            label: 'Reason',
            hint: 'The repair or finding that allows the return (at least 10 characters).',
            minLength: 10,
            tooShort: 'Give a reason of at least 10 characters.',
          }}
          onCancel={() => setReturning(false)}
          onSign={(signature, r) =>
            back.mutate({ id: i.id, reason: r, signature }, { onSuccess: () => setReturning(false) })
          }
        />
      )}
    </section>
  );
}

const today = () => new Date().toISOString().slice(0, 10);

export function LifecycleRecords({
  instrument: i,
  canBench,
  isQa,
  me,
}: {
  instrument: InstrumentDetail;
  canBench: boolean;
  isQa: boolean;
  me: Me;
}) {
  const qual = useRecordQualification();
  const maint = useRecordMaintenance();
  const [qOpen, setQOpen] = useState(false);
  const [mOpen, setMOpen] = useState(false);
  const [q, setQ] = useState({
    stage: 'iq' as (typeof QUALIFICATION_STAGES)[number],
    documentRef: '',
    executedFrom: today(),
    executedTo: today(),
    status: 'passed' as (typeof QUALIFICATION_STATUSES)[number],
    nextDue: '',
    summary: '',
  });
  const [m, setM] = useState({
    kind: 'preventive' as (typeof MAINTENANCE_KINDS)[number],
    performedOn: today(),
    performedBy: '',
    description: '',
  });
  return (
    <section aria-labelledby="life-h" className="mt-6">
      <h2 id="life-h" className="mb-2 text-lg">
        Qualification and maintenance
      </h2>
      <div className="mb-2 flex flex-wrap gap-2">
        {isQa && <Button onClick={() => setQOpen(true)}>Record qualification</Button>}
        {canBench && <Button onClick={() => setMOpen(true)}>Log maintenance</Button>}
      </div>
      <div className="grid gap-4 lg:grid-cols-2">
        <ol className="flex flex-col gap-2" aria-label="Qualification records">
          {i.qualifications.map((x) => (
            <li key={x.id} className="rounded-md border border-line bg-white p-3 text-sm">
              <p className="font-medium">
                {QUALIFICATION_STAGE_LABELS[x.stage]} · {x.status.replace(/-/g, ' ')} · {x.documentRef}
              </p>
              <p className="text-muted">
                Executed {x.executedFrom} to {x.executedTo}
                {x.nextDue ? ` · next due ${x.nextDue}` : ''}
              </p>
              <p className="mt-1">{x.summary}</p>
              {x.signature && (
                <p className="mt-1 text-xs text-muted">
                  Signed by {x.signature.printedName}, <DateTime value={x.signature.signedAt} seconds />
                </p>
              )}
            </li>
          ))}
          {i.qualifications.length === 0 && <li className="text-sm text-muted">No qualification recorded.</li>}
        </ol>
        <ol className="flex flex-col gap-2" aria-label="Maintenance log">
          {i.maintenance.map((x) => (
            <li key={x.id} className="rounded-md border border-line bg-white p-3 text-sm">
              <p className="font-medium">
                {x.performedOn} · {x.kind.replace(/-/g, ' ')} · {x.performedBy}
              </p>
              <p className="mt-1">{x.description}</p>
              <p className="mt-1 text-xs text-muted">
                Logged by {x.recordedByName}, <DateTime value={x.recordedAt} />
              </p>
            </li>
          ))}
          {i.maintenance.length === 0 && <li className="text-sm text-muted">No maintenance logged.</li>}
        </ol>
      </div>
      {isQa && (
        <SignatureDialog
          open={qOpen}
          title={`Qualification record for ${i.name}`}
          meaningText={`reviewed this qualification of ${i.name} and approve the record as written`}
          printedName={me.fullName}
          needsUsername={!me.signedOnce}
          confirmLabel="Sign and record"
          busy={qual.isPending}
          error={qual.error}
          onCancel={() => setQOpen(false)}
          onSign={(signature) =>
            qual.mutate({ id: i.id, ...q, nextDue: q.nextDue || null, signature }, { onSuccess: () => setQOpen(false) })
          }
        >
          <Field id="q-stage" label="Stage">
            <Select
              id="q-stage"
              value={q.stage}
              onChange={(e) => setQ({ ...q, stage: e.target.value as typeof q.stage })}
            >
              {QUALIFICATION_STAGES.map((s) => (
                <option key={s} value={s}>
                  {QUALIFICATION_STAGE_LABELS[s]}
                </option>
              ))}
            </Select>
          </Field>
          <Field id="q-doc" label="Document reference">
            <Input id="q-doc" value={q.documentRef} onChange={(e) => setQ({ ...q, documentRef: e.target.value })} />
          </Field>
          <div className="grid grid-cols-3 gap-2">
            <Field id="q-from" label="Executed from">
              <Input
                id="q-from"
                type="date"
                value={q.executedFrom}
                onChange={(e) => setQ({ ...q, executedFrom: e.target.value })}
              />
            </Field>
            <Field id="q-to" label="to">
              <Input
                id="q-to"
                type="date"
                value={q.executedTo}
                onChange={(e) => setQ({ ...q, executedTo: e.target.value })}
              />
            </Field>
            <Field id="q-next" label="Next due">
              <Input
                id="q-next"
                type="date"
                value={q.nextDue}
                onChange={(e) => setQ({ ...q, nextDue: e.target.value })}
              />
            </Field>
          </div>
          <Field id="q-status" label="Outcome">
            <Select
              id="q-status"
              value={q.status}
              onChange={(e) => setQ({ ...q, status: e.target.value as typeof q.status })}
            >
              {QUALIFICATION_STATUSES.map((s) => (
                <option key={s} value={s}>
                  {s.replace(/-/g, ' ')}
                </option>
              ))}
            </Select>
          </Field>
          <Field id="q-sum" label="Summary">
            <Textarea id="q-sum" value={q.summary} onChange={(e) => setQ({ ...q, summary: e.target.value })} />
          </Field>
        </SignatureDialog>
      )}
      <Dialog
        open={mOpen}
        title={`Log maintenance of ${i.name}`}
        onClose={() => setMOpen(false)}
        busy={maint.isPending}
      >
        <Field id="m-kind" label="Kind">
          <Select id="m-kind" value={m.kind} onChange={(e) => setM({ ...m, kind: e.target.value as typeof m.kind })}>
            {MAINTENANCE_KINDS.map((k) => (
              <option key={k} value={k}>
                {k.replace(/-/g, ' ')}
              </option>
            ))}
          </Select>
        </Field>
        <Field id="m-on" label="Performed on">
          <Input
            id="m-on"
            type="date"
            value={m.performedOn}
            onChange={(e) => setM({ ...m, performedOn: e.target.value })}
          />
        </Field>
        <Field id="m-by" label="Performed by" hint="Engineer or service company">
          <Input id="m-by" value={m.performedBy} onChange={(e) => setM({ ...m, performedBy: e.target.value })} />
        </Field>
        <Field id="m-desc" label="Work done">
          <Textarea id="m-desc" value={m.description} onChange={(e) => setM({ ...m, description: e.target.value })} />
        </Field>
        {maint.error && <ErrorNote error={maint.error} />}
        <div className="flex justify-end gap-2">
          <Button onClick={() => setMOpen(false)}>Cancel</Button>
          <Button
            variant="primary"
            disabled={maint.isPending}
            onClick={() => maint.mutate({ id: i.id, ...m }, { onSuccess: () => setMOpen(false) })}
          >
            Log entry
          </Button>
        </div>
      </Dialog>
    </section>
  );
}
