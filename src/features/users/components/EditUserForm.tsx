import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Textarea } from '../../../components/Field';
import type { Role } from '../../../lib/roles';
import { useUpdateUser, type UserAccount } from '../api';
import { REASON_RULE, RoleCheckboxes } from './fields';

interface Values {
  fullName: string;
  email: string;
  roles: Role[];
  reason: string;
}

/** Changes name, e-mail and roles; only changed fields are sent, always with the reason. */
export function EditUserForm({
  user,
  onDone,
  onCancel,
}: {
  user: UserAccount;
  onDone: () => void;
  onCancel: () => void;
}) {
  const update = useUpdateUser();
  const { register, handleSubmit, control, formState } = useForm<Values>({
    defaultValues: { fullName: user.fullName, email: user.email, roles: user.roles, reason: '' },
  });
  const e = formState.errors;
  const [noChange, setNoChange] = useState<string | null>(null);
  const submit = handleSubmit((v) => {
    setNoChange(null);
    const patch: { fullName?: string; email?: string; roles?: Role[] } = {};
    if (v.fullName.trim() !== user.fullName) patch.fullName = v.fullName.trim();
    if (v.email.trim() !== user.email) patch.email = v.email.trim();
    const sameRoles = v.roles.length === user.roles.length && v.roles.every((r) => user.roles.includes(r));
    if (!sameRoles) patch.roles = v.roles;
    if (Object.keys(patch).length === 0)
      return setNoChange('Nothing was changed: edit the name, e-mail or roles first.');
    update.mutate({ id: user.id, ...patch, reason: v.reason.trim() }, { onSuccess: onDone });
  });
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label={`Edit ${user.username}`}>
      <Field id="edit-fullname" label="Full name" error={e.fullName?.message}>
        <Input
          id="edit-fullname"
          invalid={!!e.fullName}
          {...register('fullName', {
            required: 'Enter the full name.',
            minLength: { value: 2, message: 'Enter the full name.' },
          })}
        />
      </Field>
      <Field id="edit-email" label="E-mail" error={e.email?.message}>
        <Input
          id="edit-email"
          type="email"
          invalid={!!e.email}
          {...register('email', {
            required: 'Enter an e-mail address.',
            pattern: { value: /^[^\s@]+@[^\s@]+\.[^\s@]+$/, message: 'This is not an e-mail address.' },
          })}
        />
      </Field>
      <Controller
        control={control}
        name="roles"
        rules={{ validate: (v) => v.length > 0 || 'Give the account at least one role.' }}
        render={({ field, fieldState }) => (
          <RoleCheckboxes
            idPrefix="edit-role"
            value={field.value}
            onChange={field.onChange}
            error={fieldState.error?.message}
          />
        )}
      />
      <Field
        id="edit-reason"
        label="Reason for the change"
        hint="Kept in the audit trail with the old and new values."
        error={e.reason?.message}
      >
        <Textarea id="edit-reason" invalid={!!e.reason} {...register('reason', REASON_RULE)} />
      </Field>
      {noChange && <ErrorNote error={noChange} />}
      {update.isError && <ErrorNote error={update.error} />}
      <div className="flex justify-end gap-2">
        <Button onClick={onCancel} disabled={update.isPending}>
          Cancel
        </Button>
        <Button type="submit" variant="primary" busy={update.isPending}>
          Save changes
        </Button>
      </div>
    </form>
  );
}
