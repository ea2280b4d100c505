/**
 * Machine accounts of the ERP/LIMS link (administrator, desk screen): the list with scopes, last
 * use and revocation; a new account shows its token once (only its SHA-256 is stored).
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { InputField, TextareaField } from '../../../components/Field';
import { QueryState } from '../../../components/QueryState';
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
import { Choices, CreateFooter, ListPanel, NewRecordFields, ShownOnce, useCreateShownOnce } from './parts';

export function MachineAccounts() {
  const q = useMachineAccounts();
  const create = useCreateMachineAccount();
  const revoke = useRevokeMachineAccount();
  const [name, setName] = useState('');
  const [scopes, setScopes] = useState<MachineScope[]>([]);
  const [reason, setReason] = useState('');
  const {
    problem,
    submit: send,
    once: token,
    dismiss,
  } = useCreateShownOnce(machineAccountCreateSchema, create, (a) => ({ name: a.name, token: a.token }));
  const [revoking, setRevoking] = useState<number | null>(null);
  const [revokeReason, setRevokeReason] = useState('');

  const submit = () =>
    send({ name, scopes, reason }, () => {
      setName('');
      setScopes([]);
      setReason('');
    });

  return (
    <ListPanel id="machine-accounts" title="Machine accounts">
      {token && (
        <ShownOnce
          testId="token-once"
          heading={`Token of ${token.name}: copy it now. It is shown once; Drumline keeps only its SHA-256.`}
          value={token.token}
          stored="I have stored the token"
          onDismiss={dismiss}
        />
      )}
      <QueryState
        query={q}
        loading={<p className="text-sm text-muted">Loading machine accounts…</p>}
        empty={<p className="text-sm text-muted">No machine account yet.</p>}
      >
        {(accounts) => (
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
              {accounts.map((a) => (
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
                        <InputField
                          id={`revoke-${a.id}`}
                          label="Why is the token revoked?"
                          value={revokeReason}
                          onChange={(e) => setRevokeReason(e.target.value)}
                        />
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
      </QueryState>
      <NewRecordFields title="New machine account">
        <InputField
          id="ma-name"
          label="Name (e.g. ERP production)"
          value={name}
          onChange={(e) => setName(e.target.value)}
        />
        <Choices
          legend="Scopes"
          choices={MACHINE_SCOPES}
          value={scopes}
          onChange={setScopes}
          words={(s) => MACHINE_SCOPE_LABELS[s]}
        />
        <TextareaField
          id="ma-reason"
          label="Why is the account made?"
          fieldClassName="md:col-span-2"
          rows={2}
          value={reason}
          onChange={(e) => setReason(e.target.value)}
        />
      </NewRecordFields>
      <CreateFooter problem={problem} mutation={create} onSubmit={submit}>
        Make account and show its token
      </CreateFooter>
    </ListPanel>
  );
}
