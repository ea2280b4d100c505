/** Pieces shared by the account forms. */
import type { UseFormRegisterReturn } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { Field, Input } from '../../../components/Field';
import { ROLE_LABELS, ROLES, type Role } from '../../../lib/roles';
import { CONFIRMED_ROLES, roleCombinationProblem } from '../../../../server/lib/contract';

/** Role rules checked before anything is sent (the server and the database check them again). */
export const ROLES_RULE = {
  validate: (v: Role[]) => {
    if (v.length === 0) return 'Give the account at least one role.';
    return roleCombinationProblem(v) ?? true;
  },
};

export const REASON_RULE = {
  required: 'Give a reason: it is kept in the audit trail.',
  validate: (v: string) => v.trim().length >= 3 || 'Give a reason of at least 3 characters.',
  maxLength: { value: 1000, message: 'Keep the reason under 1000 characters.' },
};

export const TEMP_PASSWORD_RULE = {
  required: 'Enter a temporary password.',
  minLength: { value: 12, message: 'The password must have at least 12 characters.' },
  maxLength: { value: 200, message: 'The password must have at most 200 characters.' },
};

export const FULL_NAME_RULE = {
  required: 'Enter the full name.',
  minLength: { value: 2, message: 'Enter the full name.' },
};

export const EMAIL_RULE = {
  required: 'Enter an e-mail address.',
  pattern: { value: /^[^\s@]+@[^\s@]+\.[^\s@]+$/, message: 'This is not an e-mail address.' },
};

/** A temporary password typed or suggested (the button fills in a random one and checks it). */
export function TemporaryPasswordField({
  id,
  hint,
  error,
  registration,
  onSuggest,
}: {
  id: string;
  hint: string;
  error?: string;
  registration: UseFormRegisterReturn;
  /** called with a suggested password */
  onSuggest: (password: string) => void;
}) {
  return (
    <Field id={id} label="Temporary password" hint={hint} error={error}>
      <div className="flex gap-2">
        <Input
          id={id}
          autoComplete="new-password"
          spellCheck={false}
          className="font-mono"
          invalid={!!error}
          {...registration}
        />
        <Button onClick={() => onSuggest(suggestPassword())}>Suggest</Button>
      </div>
    </Field>
  );
}

/** 16 characters from an alphabet without look-alikes (no 0/O, 1/l/I), from the browser's CSPRNG. */
export function suggestPassword(length = 16): string {
  const alphabet = 'abcdefghijkmnpqrstuvwxyzABCDEFGHJKLMNPQRSTUVWXYZ23456789';
  const bytes = new Uint32Array(length);
  crypto.getRandomValues(bytes);
  return Array.from(bytes, (b) => alphabet[b % alphabet.length]).join('');
}

export const ROLE_HINTS: Record<Role, string> = {
  operator: 'registers lots, measures containers, signs tests as performed',
  verifier: 'reviews and verifies tests performed by someone else',
  qa_manager:
    'owns materials, identity methods, references, instruments and their check specifications, suppliers and sources; decides investigations and retests; releases or rejects lots; reviews the audit trail, trends and integrity alerts; never tests or verifies',
  auditor: 'reads everything and the audit trail; changes nothing',
  admin: 'manages accounts and roles; signs no GMP record',
};

/** The render of a form's `roles` Controller: the role boxes with the rule's sentence. */
export const roleBoxes =
  (idPrefix: string) =>
  ({
    field,
    fieldState,
  }: {
    field: { value: Role[]; onChange: (r: Role[]) => void };
    fieldState: { error?: { message?: string } };
  }) => (
    <RoleCheckboxes
      idPrefix={idPrefix}
      value={field.value}
      onChange={field.onChange}
      error={fieldState.error?.message}
    />
  );

export function RoleCheckboxes({
  value,
  onChange,
  error,
  idPrefix,
}: {
  value: Role[];
  onChange: (r: Role[]) => void;
  error?: string;
  idPrefix: string;
}) {
  return (
    <fieldset className="flex flex-col gap-1">
      <legend className="mb-1 text-sm font-medium">Roles</legend>
      {ROLES.map((r) => (
        <label key={r} htmlFor={`${idPrefix}-${r}`} className="flex min-h-8 items-start gap-2 text-sm">
          <input
            id={`${idPrefix}-${r}`}
            type="checkbox"
            className="mt-1 size-4 accent-petrol"
            checked={value.includes(r)}
            onChange={(e) =>
              onChange(
                e.target.checked ? ROLES.filter((x) => x === r || value.includes(x)) : value.filter((x) => x !== r),
              )
            }
          />
          <span>
            <span className="font-medium">{ROLE_LABELS[r]}</span> <span className="text-muted">— {ROLE_HINTS[r]}</span>
          </span>
        </label>
      ))}
      <p className="mt-1 text-xs text-muted">
        The administrator role is held alone. {CONFIRMED_ROLES.map((r) => ROLE_LABELS[r]).join(', ')} are granted when a
        second administrator confirms; other changes apply at once.
      </p>
      {error && (
        <p role="alert" className="text-sm text-fail">
          {error}
        </p>
      )}
    </fieldset>
  );
}
