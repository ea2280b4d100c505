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
import { InputField, SelectField, TextareaField } from '../../../components/Field';
import { bindTexts } from '../../../lib/form-state';
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

/** What the instrument page hands to both parts: the instrument and what the user may do. */
interface LifecycleProps {
  instrument: InstrumentDetail;
  canBench: boolean;
  isQa: boolean;
  me: Me;
}

export function ServiceBanner({ instrument: i, canBench, isQa, me }: LifecycleProps) {
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
        <TextareaField
          id="oos-reason"
          label="Reason"
          hint="What is wrong, and who was told (at least 10 characters)."
          value={reason}
          onChange={(e) => setReason(e.target.value)}
        />
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
/** "out-of-tolerance" -> "out of tolerance" */
const words = (s: string) => s.replace(/-/g, ' ');

export function LifecycleRecords({ instrument: i, canBench, isQa, me }: LifecycleProps) {
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
  const bindQ = bindTexts(q, setQ);
  const bindM = bindTexts(m, setM);
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
                {QUALIFICATION_STAGE_LABELS[x.stage]} · {words(x.status)} · {x.documentRef}
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
                {x.performedOn} · {words(x.kind)} · {x.performedBy}
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
          <SelectField id="q-stage" label="Stage" {...bindQ('stage')}>
            {QUALIFICATION_STAGES.map((s) => (
              <option key={s} value={s}>
                {QUALIFICATION_STAGE_LABELS[s]}
              </option>
            ))}
          </SelectField>
          <InputField id="q-doc" label="Document reference" {...bindQ('documentRef')} />
          <div className="grid grid-cols-3 gap-2">
            <InputField id="q-from" label="Executed from" type="date" {...bindQ('executedFrom')} />
            <InputField id="q-to" label="to" type="date" {...bindQ('executedTo')} />
            <InputField id="q-next" label="Next due" type="date" {...bindQ('nextDue')} />
          </div>
          <SelectField id="q-status" label="Outcome" {...bindQ('status')}>
            {QUALIFICATION_STATUSES.map((s) => (
              <option key={s} value={s}>
                {words(s)}
              </option>
            ))}
          </SelectField>
          <TextareaField id="q-sum" label="Summary" {...bindQ('summary')} />
        </SignatureDialog>
      )}
      <Dialog
        open={mOpen}
        title={`Log maintenance of ${i.name}`}
        onClose={() => setMOpen(false)}
        busy={maint.isPending}
      >
        <SelectField id="m-kind" label="Kind" {...bindM('kind')}>
          {MAINTENANCE_KINDS.map((k) => (
            <option key={k} value={k}>
              {words(k)}
            </option>
          ))}
        </SelectField>
        <InputField id="m-on" label="Performed on" type="date" {...bindM('performedOn')} />
        <InputField id="m-by" label="Performed by" hint="Engineer or service company" {...bindM('performedBy')} />
        <TextareaField id="m-desc" label="Work done" {...bindM('description')} />
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
