/**
 * QA's material master (desk screen): per active material the current profile version (retest
 * interval, shelf life, risk class, the release checks besides IR identity) and the "IR not
 * suitable" flag; a new version is approved with a signature and a reason.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Select } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import {
  CHECK_KIND_LABELS,
  CHECK_KINDS,
  RISK_CLASS_LABELS,
  RISK_CLASSES,
  profileSchema,
  useProfiles,
  useSaveProfile,
  type MaterialProfileView,
} from '../api';

type Me = { fullName: string; signedOnce: boolean };
type Kind = (typeof CHECK_KINDS)[number];
type Risk = (typeof RISK_CLASSES)[number];

function ProfileForm({ view, me, onDone }: { view: MaterialProfileView; me: Me; onDone: () => void }) {
  const save = useSaveProfile();
  const cur = view.current;
  const [retest, setRetest] = useState(String(cur?.retestMonths ?? 24));
  const [shelf, setShelf] = useState(String(cur?.shelfLifeMonths ?? 36));
  const [risk, setRisk] = useState<Risk>(cur?.riskClass ?? 'medium');
  const [checks, setChecks] = useState(cur?.checks ?? []);
  const [problem, setProblem] = useState<string | null>(null);
  const [signing, setSigning] = useState(false);
  const dummySig = { password: 'x' };
  const open = () => {
    const parsed = profileSchema.safeParse({
      retestMonths: Number(retest),
      shelfLifeMonths: Number(shelf),
      riskClass: risk,
      checks,
      reason: 'checked before signing',
      signature: dummySig,
    });
    if (!parsed.success) {
      setProblem(parsed.error.issues[0]?.message ?? 'Check the form.');
      return;
    }
    setProblem(null);
    setSigning(true);
  };
  return (
    <div
      className="grid gap-2 rounded-md border border-line p-3 md:grid-cols-3"
      data-testid={`profile-form-${view.material.id}`}
    >
      <Field id={`rt-${view.material.id}`} label="Retest interval (months)">
        <Input
          id={`rt-${view.material.id}`}
          inputMode="numeric"
          value={retest}
          onChange={(e) => setRetest(e.target.value)}
        />
      </Field>
      <Field id={`sl-${view.material.id}`} label="Shelf life (months)">
        <Input
          id={`sl-${view.material.id}`}
          inputMode="numeric"
          value={shelf}
          onChange={(e) => setShelf(e.target.value)}
        />
      </Field>
      <Field id={`rk-${view.material.id}`} label="Risk class">
        <Select id={`rk-${view.material.id}`} value={risk} onChange={(e) => setRisk(e.target.value as Risk)}>
          {RISK_CLASSES.map((r) => (
            <option key={r} value={r}>
              {RISK_CLASS_LABELS[r]}
            </option>
          ))}
        </Select>
      </Field>
      <fieldset className="md:col-span-3">
        <legend className="mb-1 text-sm font-medium">Release checks besides IR identity</legend>
        {checks.map((c, i) => (
          <div key={i} className="mb-2 grid gap-2 md:grid-cols-[10rem_1fr_2fr_auto]">
            <Input
              aria-label="Check key"
              value={c.key}
              onChange={(e) => setChecks(checks.map((x, j) => (j === i ? { ...x, key: e.target.value } : x)))}
            />
            <Select
              aria-label="Kind"
              value={c.kind}
              onChange={(e) => setChecks(checks.map((x, j) => (j === i ? { ...x, kind: e.target.value as Kind } : x)))}
            >
              {CHECK_KINDS.map((k) => (
                <option key={k} value={k}>
                  {CHECK_KIND_LABELS[k]}
                </option>
              ))}
            </Select>
            <Input
              aria-label="What is checked"
              value={c.label}
              onChange={(e) => setChecks(checks.map((x, j) => (j === i ? { ...x, label: e.target.value } : x)))}
            />
            <Button size="desk" variant="quiet" onClick={() => setChecks(checks.filter((_, j) => j !== i))}>
              Remove
            </Button>
          </div>
        ))}
        <Button
          size="desk"
          onClick={() => setChecks([...checks, { key: `check-${checks.length + 1}`, kind: 'coa-review', label: '' }])}
        >
          Add a check
        </Button>
      </fieldset>
      {problem && (
        <p className="text-sm text-fail md:col-span-3" role="alert">
          {problem}
        </p>
      )}
      <div className="flex gap-2 md:col-span-3">
        <Button size="desk" variant="primary" onClick={open}>
          Approve new version…
        </Button>
        <Button size="desk" variant="quiet" onClick={onDone}>
          Cancel
        </Button>
      </div>
      <ReasonSignatureDialog
        open={signing}
        title="Approve the material master"
        meaningText={`approved version ${(cur?.version ?? 0) + 1} of the material master of ${view.material.name}`}
        printedName={me.fullName}
        needsUsername={!me.signedOnce}
        confirmLabel="Sign approval"
        reason={{ label: 'Reason', minLength: 3, tooShort: 'Give the reason for the change.' }}
        busy={save.isPending}
        error={save.error}
        onCancel={() => {
          setSigning(false);
          save.reset();
        }}
        onSign={(signature, reason) =>
          save.mutate(
            {
              materialId: view.material.id,
              body: {
                retestMonths: Number(retest),
                shelfLifeMonths: Number(shelf),
                riskClass: risk,
                checks,
                reason,
                signature,
              },
            },
            {
              onSuccess: () => {
                setSigning(false);
                onDone();
              },
            },
          )
        }
      />
    </div>
  );
}

export function MaterialMaster({ me, canEdit }: { me: Me; canEdit: boolean }) {
  const q = useProfiles();
  const [editing, setEditing] = useState<number | null>(null);
  if (q.isPending) return <p className="text-sm text-muted">Loading the material master…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  return (
    <ul className="flex flex-col gap-3">
      {q.data.map((v) => (
        <li
          key={v.material.id}
          className="rounded-md border border-line p-3 text-sm"
          data-testid={`profile-${v.material.code}`}
        >
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <span className="font-medium">
              {v.material.name} <span className="text-muted">({v.material.code})</span>
              {v.material.irNotSuitable && <span className="ml-2 text-amber-ink">identity by IR not suitable</span>}
            </span>
            {canEdit && editing !== v.material.id && (
              <Button size="desk" onClick={() => setEditing(v.material.id)}>
                New version…
              </Button>
            )}
          </div>
          {v.current ? (
            <p className="text-muted">
              Version {v.current.version}: retest after {v.current.retestMonths} months, shelf life{' '}
              {v.current.shelfLifeMonths} months, {RISK_CLASS_LABELS[v.current.riskClass].toLowerCase()}; checks:{' '}
              {v.current.checks.length ? v.current.checks.map((c) => c.label).join('; ') : 'none'} · approved by{' '}
              {v.current.createdBy.name}
            </p>
          ) : (
            <p className="text-amber-ink">No approved profile: its lots cannot be released until QA approves one.</p>
          )}
          {editing === v.material.id && (
            <div className="mt-2">
              <ProfileForm view={v} me={me} onDone={() => setEditing(null)} />
            </div>
          )}
        </li>
      ))}
    </ul>
  );
}
