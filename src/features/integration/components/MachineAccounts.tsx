/**
 * Machine accounts of the ERP/LIMS link (administrator, desk screen): the list with scopes, last
 * use and revocation; a new account shows its token once (only its SHA-256 is stored).
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Textarea } from '../../../components/Field';
import { errorMessage } from '../../../lib/api';
import {
  MACHINE_SCOPE_LABELS,
  MACHINE_SCOPES,
  machineAccountCreateSchema,
  useCreateMachineAccount,
  useMachineAccounts,
  useRevokeMachineAccount,
  type MachineScope,
} from '../api';

export function MachineAccounts() {
  const q = useMachineAccounts();
  const create = useCreateMachineAccount();
  const revoke = useRevokeMachineAccount();
  const [name, setName] = useState('');
  const [scopes, setScopes] = useState<MachineScope[]>([]);
  const [reason, setReason] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const [token, setToken] = useState<{ name: string; token: string } | null>(null);
  const [revoking, setRevoking] = useState<number | null>(null);
  const [revokeReason, setRevokeReason] = useState('');

  const submit = () => {
    const parsed = machineAccountCreateSchema.safeParse({ name, scopes, reason });
    if (!parsed.success) {
      setProblem(parsed.error.issues[0]?.message ?? 'Check the form.');
      return;
    }
    setProblem(null);
    create.mutate(parsed.data, {
      onSuccess: (a) => {
        setToken({ name: a.name, token: a.token });
        setName('');
        setScopes([]);
        setReason('');
      },
    });
  };

  return (
    <section aria-labelledby="machine-accounts" className="rounded-md border border-line bg-white p-4">
      <h2 id="machine-accounts" className="mb-2 text-lg">
        Machine accounts
      </h2>
      {token && (
        <div className="mb-3 rounded-md border border-amber/50 bg-amber-soft p-3 text-sm" data-testid="token-once">
          <p className="font-medium text-amber-ink">
            Token of {token.name}: copy it now. It is shown once; Drumline keeps only its SHA-256.
          </p>
          <code className="break-all">{token.token}</code>
          <div className="mt-2">
            <Button size="desk" onClick={() => setToken(null)}>
              I have stored the token
            </Button>
          </div>
        </div>
      )}
      {q.isPending ? (
        <p className="text-sm text-muted">Loading machine accounts…</p>
      ) : q.isError ? (
        <ErrorNote error={q.error} onRetry={() => void q.refetch()} />
      ) : q.data.length === 0 ? (
        <p className="text-sm text-muted">No machine account yet.</p>
      ) : (
        <table className="mb-4 w-full text-sm">
          <thead>
            <tr className="text-left text-muted">
              <th className="py-1" data-key-column="name">
                Name
              </th>
              <th data-key-column="scopes">Scopes</th>
              <th>Token starts</th>
              <th>Made</th>
              <th>Last used</th>
              <th data-key-column="state">State</th>
            </tr>
          </thead>
          <tbody>
            {q.data.map((a) => (
              <tr key={a.id} className="border-t border-line align-top" data-testid={`machine-${a.name}`}>
                <td className="py-1 font-medium">{a.name}</td>
                <td>{a.scopes.map((s) => MACHINE_SCOPE_LABELS[s]).join('; ')}</td>
                <td className="tabular-nums">{a.tokenHint}…</td>
                <td>
                  {a.createdBy.name}, <DateTime value={a.createdAt} />
                </td>
                <td>{a.lastUsedAt ? <DateTime value={a.lastUsedAt} /> : 'never'}</td>
                <td>
                  {a.revokedAt ? (
                    <span>
                      Revoked <DateTime value={a.revokedAt} />: {a.revokeReason}
                    </span>
                  ) : revoking === a.id ? (
                    <div className="flex flex-col gap-1">
                      <Field id={`revoke-${a.id}`} label="Why is the token revoked?">
                        <Input
                          id={`revoke-${a.id}`}
                          value={revokeReason}
                          onChange={(e) => setRevokeReason(e.target.value)}
                        />
                      </Field>
                      <div className="flex gap-2">
                        <Button
                          size="desk"
                          variant="danger"
                          disabled={revokeReason.trim().length < 3 || revoke.isPending}
                          onClick={() =>
                            revoke.mutate(
                              { id: a.id, reason: revokeReason.trim() },
                              {
                                onSuccess: () => {
                                  setRevoking(null);
                                  setRevokeReason('');
                                },
                              },
                            )
                          }
                        >
                          Revoke token
                        </Button>
                        <Button size="desk" variant="quiet" onClick={() => setRevoking(null)}>
                          Cancel
                        </Button>
                      </div>
                      {revoke.isError && <p className="text-fail">{errorMessage(revoke.error)}</p>}
                    </div>
                  ) : (
                    <Button size="desk" onClick={() => setRevoking(a.id)}>
                      Revoke…
                    </Button>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      <h3 className="mb-2 font-medium">New machine account</h3>
      <div className="grid gap-3 md:grid-cols-2">
        <Field id="ma-name" label="Name (e.g. ERP production)">
          <Input id="ma-name" value={name} onChange={(e) => setName(e.target.value)} />
        </Field>
        <fieldset className="text-sm">
          <legend className="mb-1 font-medium">Scopes</legend>
          {MACHINE_SCOPES.map((s) => (
            <label key={s} className="flex items-center gap-2">
              <input
                type="checkbox"
                checked={scopes.includes(s)}
                onChange={(e) => setScopes(e.target.checked ? [...scopes, s] : scopes.filter((x) => x !== s))}
              />
              {MACHINE_SCOPE_LABELS[s]}
            </label>
          ))}
        </fieldset>
        <Field id="ma-reason" label="Why is the account made?" className="md:col-span-2">
          <Textarea id="ma-reason" rows={2} value={reason} onChange={(e) => setReason(e.target.value)} />
        </Field>
      </div>
      {(problem || create.isError) && (
        <p className="mt-2 text-sm text-fail" role="alert">
          {problem ?? errorMessage(create.error)}
        </p>
      )}
      <Button className="mt-3" size="desk" variant="primary" disabled={create.isPending} onClick={submit}>
        Make account and show its token
      </Button>
    </section>
  );
}
