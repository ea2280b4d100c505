/**
 * QA's material master (desk screen): per active material the current profile version (retest
 * interval, shelf life, risk class, the release checks besides IR identity) and the "IR not
 * suitable" flag; a new version is approved with a signature and a reason.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { Input, InputField, Select, SelectField } from '../../../components/Field';
import { QueryState } from '../../../components/QueryState';
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
import { SignedChangeForm, type Me } from './SignedChangeForm';
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
  const dummySig = { password: 'x' };
  const canOpen = () => {
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
      return false;
    }
    setProblem(null);
    return true;
  };
  const id = (k: string) => `${k}-${view.material.id}`;
  return (
    <SignedChangeForm
      testId={`profile-form-${view.material.id}`}
      me={me}
      onDone={onDone}
      openLabel="Approve new version…"
      canOpen={canOpen}
      title="Approve the material master"
      meaningText={`approved version ${(cur?.version ?? 0) + 1} of the material master of ${view.material.name}`}
      confirmLabel="Sign approval"
      mutation={save}
      send={(signature, reason, stored) =>
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
          { onSuccess: stored },
        )
      }
    >
      <InputField
        id={id('rt')}
        label="Retest interval (months)"
        inputMode="numeric"
        value={retest}
        onChange={(e) => setRetest(e.target.value)}
      />
      <InputField
        id={id('sl')}
        label="Shelf life (months)"
        inputMode="numeric"
        value={shelf}
        onChange={(e) => setShelf(e.target.value)}
      />
      <SelectField id={id('rk')} label="Risk class" value={risk} onChange={(e) => setRisk(e.target.value as Risk)}>
        {RISK_CLASSES.map((r) => (
          <option key={r} value={r}>
            {RISK_CLASS_LABELS[r]}
          </option>
        ))}
      </SelectField>
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
    </SignedChangeForm>
  );
}

export function MaterialMaster({ me, canEdit }: { me: Me; canEdit: boolean }) {
  const q = useProfiles();
  const [editing, setEditing] = useState<number | null>(null);
  return (
    <QueryState query={q} loading={<p className="text-sm text-muted">Loading the material master…</p>}>
      {(views) => (
        <ul className="flex flex-col gap-3">
          {views.map((v) => (
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
                <p className="text-amber-ink">
                  No approved profile: its lots cannot be released until QA approves one.
                </p>
              )}
              {editing === v.material.id && (
                <div className="mt-2">
                  <ProfileForm view={v} me={me} onDone={() => setEditing(null)} />
                </div>
              )}
            </li>
          ))}
        </ul>
      )}
    </QueryState>
  );
}
