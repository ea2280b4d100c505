/**
 * Export-folder intake on the instrument page (docs/instrument-intake.md): the folder settings
 * (QA or the administrator changes them, with a reason), the files waiting for an operator
 * (assign with a confirmation, or "not a sample" with a reason) and every file received.
 */
import { useId, useState, type FormEvent, type ReactNode } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { Dialog } from '../../../components/Dialog';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, InputField, Textarea, TextareaField } from '../../../components/Field';
import {
  ACQUISITION_STATE_LABELS,
  useAcquisitions,
  useAssignAcquisition,
  useIntakeSetting,
  useNotASample,
  useSetIntake,
  type AcquisitionEntry,
  type IntakeSettingView,
} from '../api';

function offsetText(a: AcquisitionEntry): string {
  if (a.clockOffsetSeconds === null) return a.acquiredText ? `stated "${a.acquiredText}"` : 'no time stated';
  const s = a.clockOffsetSeconds;
  return `${Math.abs(s) < 120 ? `${s} s` : `${Math.round(s / 6) / 10} min`} ${s >= 0 ? 'before' : 'after'} receipt`;
}

function SettingsForm({
  instrumentId,
  view,
  onDone,
}: {
  instrumentId: number;
  view: IntakeSettingView;
  onDone: () => void;
}) {
  const id = useId();
  const set = useSetIntake(instrumentId);
  const [folder, setFolder] = useState(view.current.exportFolder ?? '');
  const [polling, setPolling] = useState(view.current.usePolling);
  const [manual, setManual] = useState(view.current.manualUploadAllowed);
  const [zone, setZone] = useState(view.current.timeZone);
  const [reason, setReason] = useState('');
  const submit = (e: FormEvent) => {
    e.preventDefault();
    set.mutate(
      {
        exportFolder: folder.trim() || null,
        usePolling: polling,
        manualUploadAllowed: manual,
        timeZone: zone.trim(),
        reason,
      },
      { onSuccess: onDone },
    );
  };
  return (
    <form onSubmit={submit} className="mt-3 flex flex-col gap-3" aria-label="Change the intake settings">
      <Field
        id={`${id}-folder`}
        label="Export folder"
        hint={`A folder inside the site's export root (${view.exportRoot}/), e.g. ftir-2. Empty: no folder.`}
      >
        <Input id={`${id}-folder`} value={folder} onChange={(e) => setFolder(e.target.value)} />
      </Field>
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={polling} onChange={(e) => setPolling(e.target.checked)} />
        The folder is a mounted share: look for new files by polling
      </label>
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={manual} onChange={(e) => setManual(e.target.checked)} />
        Operators may also upload spectra of this instrument by hand
      </label>
      <Field id={`${id}-zone`} label="Time zone of the instrument clock" hint="An IANA name such as Europe/Berlin.">
        <Input id={`${id}-zone`} value={zone} onChange={(e) => setZone(e.target.value)} />
      </Field>
      <Field id={`${id}-reason`} label="Reason for the change" required>
        <Textarea id={`${id}-reason`} value={reason} onChange={(e) => setReason(e.target.value)} rows={2} />
      </Field>
      {set.isError && <ErrorNote error={set.error} />}
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={set.isPending}>
          Save intake settings
        </Button>
        <Button type="button" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}

/** What the intake panel hands to the dialog of a decision on one acquisition. */
interface DecisionProps {
  instrumentId: number;
  acquisition: AcquisitionEntry | null;
  onClose: () => void;
}

/** A decision on one acquisition: a dialog with a form, the server's answer and the button that sends. */
function AcquisitionDialog({
  acquisition,
  title,
  description,
  close,
  mutation,
  onSubmit,
  submit,
  children,
}: {
  acquisition: AcquisitionEntry | null;
  title: string;
  description: ReactNode;
  close: () => void;
  mutation: { isPending: boolean; isError: boolean; error: unknown };
  onSubmit: (acquisition: AcquisitionEntry) => void;
  /** the button that sends */
  submit: ReactNode;
  children: ReactNode;
}) {
  return (
    <Dialog open={!!acquisition} title={title} description={description} onClose={close} busy={mutation.isPending}>
      <form
        className="flex flex-col gap-3"
        onSubmit={(e) => {
          e.preventDefault();
          if (acquisition) onSubmit(acquisition);
        }}
      >
        {children}
        {mutation.isError && <ErrorNote error={mutation.error} />}
        {submit}
      </form>
    </Dialog>
  );
}

function AssignDialog({ instrumentId, acquisition, onClose }: DecisionProps) {
  const id = useId();
  const assign = useAssignAcquisition(instrumentId);
  const [containerId, setContainerId] = useState('');
  const [reason, setReason] = useState('');
  const [sure, setSure] = useState(false);
  const close = () => {
    assign.reset();
    setContainerId('');
    setReason('');
    setSure(false);
    onClose();
  };
  return (
    <AcquisitionDialog
      acquisition={acquisition}
      title="Assign an acquisition to a container"
      description={
        acquisition ? `File ${acquisition.fileName}, received ${new Date(acquisition.receivedAt).toLocaleString()}` : ''
      }
      close={close}
      mutation={assign}
      onSubmit={(a) =>
        assign.mutate(
          { id: a.id, containerId: Number(containerId), confirm: true, reason: reason.trim() || undefined },
          { onSuccess: close },
        )
      }
      submit={
        <Button type="submit" variant="primary" disabled={!sure || !containerId} busy={assign.isPending}>
          Assign and record the measurement
        </Button>
      }
    >
      {acquisition?.stateReason && <p className="text-sm text-muted">Left unassigned: {acquisition.stateReason}</p>}
      <InputField
        id={`${id}-c`}
        label="Container id"
        hint="The container this spectrum was measured from (its test must be in progress on this instrument)."
        inputMode="numeric"
        value={containerId}
        onChange={(e) => setContainerId(e.target.value)}
      />
      <TextareaField
        id={`${id}-r`}
        label="Reason, if the container already has a valid result"
        rows={2}
        value={reason}
        onChange={(e) => setReason(e.target.value)}
      />
      <label className="flex items-center gap-2 text-sm">
        <input type="checkbox" checked={sure} onChange={(e) => setSure(e.target.checked)} />I confirm this acquisition
        is the spectrum of this container
      </label>
    </AcquisitionDialog>
  );
}

function NotASampleDialog({ instrumentId, acquisition, onClose }: DecisionProps) {
  const id = useId();
  const mark = useNotASample(instrumentId);
  const [reason, setReason] = useState('');
  const close = () => {
    mark.reset();
    setReason('');
    onClose();
  };
  return (
    <AcquisitionDialog
      acquisition={acquisition}
      title="Not a sample"
      description={acquisition?.fileName}
      close={close}
      mutation={mark}
      onSubmit={(a) => mark.mutate({ id: a.id, reason }, { onSuccess: close })}
      submit={
        <Button type="submit" variant="danger" busy={mark.isPending}>
          Mark as not a sample
        </Button>
      }
    >
      <Field id={`${id}-r`} label="What the file is, and why it is no sample's spectrum" required>
        <Textarea id={`${id}-r`} rows={3} value={reason} onChange={(e) => setReason(e.target.value)} />
      </Field>
      <p className="text-sm text-muted">The file stays on record; QA's reconciliation shows it with your reason.</p>
    </AcquisitionDialog>
  );
}

/** An acquisitions table (instrument page, test reconciliation). */
export function AcquisitionTable({
  rows,
  label,
  actions,
}: {
  rows: AcquisitionEntry[];
  label: string;
  actions?: (a: AcquisitionEntry) => React.ReactNode;
}) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-left text-sm" aria-label={label}>
        <thead>
          <tr className="border-b border-line text-muted">
            <th className="py-1 pr-3" data-key-column="file">
              File
            </th>
            <th className="py-1 pr-3">Received</th>
            <th className="py-1 pr-3">Acquired (file)</th>
            <th className="py-1 pr-3" data-key-column="state">
              State
            </th>
            <th className="py-1 pr-3" data-key-column="container">
              Container, measurement
            </th>
            {actions && <th className="py-1">Decide</th>}
          </tr>
        </thead>
        <tbody>
          {rows.map((a) => (
            <tr key={a.id} className="border-b border-line/60 align-top" data-testid="acquisition-row">
              <td className="py-1 pr-3 break-all">{a.fileName}</td>
              <td className="py-1 pr-3">
                <DateTime value={a.receivedAt} seconds />
              </td>
              <td className="py-1 pr-3">
                {offsetText(a)}
                {a.clockWarning && <p className="mt-1 rounded bg-amber-soft px-2 py-1">{a.clockWarning}</p>}
              </td>
              <td className="py-1 pr-3">
                <span className="font-medium">{ACQUISITION_STATE_LABELS[a.state]}</span>
                {a.stateReason && <p className="text-muted">{a.stateReason}</p>}
                {a.decidedBy && a.state !== 'unassigned' && <p className="text-xs text-muted">by {a.decidedBy}</p>}
              </td>
              <td className="py-1 pr-3">
                {a.containerLabel ?? a.labelFound ?? '—'}
                {a.measurementId ? ` · measurement ${a.measurementId}` : ''}
              </td>
              {actions && <td className="py-1">{actions(a)}</td>}
            </tr>
          ))}
          {rows.length === 0 && (
            <tr>
              <td colSpan={6} className="py-2 text-muted">
                None.
              </td>
            </tr>
          )}
        </tbody>
      </table>
    </div>
  );
}

export function IntakePanel({
  instrumentId,
  canSet,
  canDecide,
}: {
  instrumentId: number;
  canSet: boolean;
  canDecide: boolean;
}) {
  const setting = useIntakeSetting(instrumentId);
  const list = useAcquisitions(instrumentId, !!setting.data?.current.exportFolder || !!setting.data?.history.length);
  const [editing, setEditing] = useState(false);
  const [assigning, setAssigning] = useState<AcquisitionEntry | null>(null);
  const [setting_aside, setSettingAside] = useState<AcquisitionEntry | null>(null);
  if (setting.isPending) return null;
  if (setting.isError) return <ErrorNote error={setting.error} onRetry={() => void setting.refetch()} />;
  const c = setting.data.current;
  const all = list.data ?? [];
  const unassigned = all.filter((a) => a.state === 'unassigned');
  return (
    <section aria-labelledby="intake-h" className="mt-6 rounded-md border border-line bg-white p-4">
      <h2 id="intake-h" className="text-lg">
        Export folder
      </h2>
      <p className="mt-1 text-sm" data-testid="intake-summary">
        {c.exportFolder ? (
          <>
            Watching <span className="font-mono">{`${setting.data.exportRoot}/${c.exportFolder}`}</span>
            {c.usePolling ? ' (polled: mounted share)' : ''}. Manual upload{' '}
            {c.manualUploadAllowed ? 'allowed' : 'switched off'}. Instrument clock: {c.timeZone}.
          </>
        ) : (
          <>No export folder: spectra are uploaded by hand. Instrument clock: {c.timeZone}.</>
        )}
        {c.setBy && (
          <span className="text-muted">
            {' '}
            Set by {c.setBy}, <DateTime value={c.setAt!} />: “{c.reason}”
          </span>
        )}
      </p>
      {canSet && !editing && (
        <Button className="mt-2" onClick={() => setEditing(true)}>
          Change intake settings…
        </Button>
      )}
      {canSet && editing && (
        <SettingsForm instrumentId={instrumentId} view={setting.data} onDone={() => setEditing(false)} />
      )}
      {(c.exportFolder || all.length > 0) && (
        <>
          <h3 className="mt-4 mb-1 font-medium">Unassigned acquisitions ({unassigned.length})</h3>
          <p className="mb-2 text-sm text-muted">
            Files from the folder that name no container with a test in progress here, or that would measure a container
            again. Each stays on record until an operator assigns it or marks it as not a sample.
          </p>
          <AcquisitionTable
            rows={unassigned}
            label="Unassigned acquisitions"
            actions={
              canDecide
                ? (a) => (
                    <div className="flex flex-wrap gap-1">
                      <Button size="desk" onClick={() => setAssigning(a)}>
                        Assign…
                      </Button>
                      <Button size="desk" variant="quiet" onClick={() => setSettingAside(a)}>
                        Not a sample…
                      </Button>
                    </div>
                  )
                : undefined
            }
          />
          <h3 className="mt-4 mb-1 font-medium">Every file received (latest first)</h3>
          <AcquisitionTable rows={all.filter((a) => a.state !== 'unassigned')} label="Every file received" />
        </>
      )}
      <AssignDialog instrumentId={instrumentId} acquisition={assigning} onClose={() => setAssigning(null)} />
      <NotASampleDialog instrumentId={instrumentId} acquisition={setting_aside} onClose={() => setSettingAside(null)} />
    </section>
  );
}
