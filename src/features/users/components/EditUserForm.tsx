import { useState } from 'react';
import { Controller, useForm } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { InputField, TextareaField } from '../../../components/Field';
import type { Role } from '../../../lib/roles';
import { useUpdateUser, type UserAccount } from '../api';
import { EMAIL_RULE, FULL_NAME_RULE, REASON_RULE, roleBoxes, ROLES_RULE } from './fields';

interface Values {
  fullName: string;
  email: string;
  roles: Role[];
  reason: string;
}

/**
 * Changes name, e-mail and roles; only changed fields are sent, always with the reason. On one's
 * own account the roles are not offered: nobody changes their own roles (docs/access.md).
 */
export function EditUserForm({
  user,
  isSelf = false,
  onDone,
  onCancel,
}: {
  user: UserAccount;
  isSelf?: boolean;
  onDone: (after: UserAccount) => void;
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
    if (!sameRoles && !isSelf) patch.roles = v.roles;
    if (Object.keys(patch).length === 0)
      return setNoChange(`Nothing was changed: edit the name, e-mail${isSelf ? '' : ' or roles'} first.`);
    update.mutate({ id: user.id, ...patch, reason: v.reason.trim() }, { onSuccess: onDone });
  });
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label={`Edit ${user.username}`}>
      <InputField
        id="edit-fullname"
        label="Full name"
        error={e.fullName?.message}
        invalid={!!e.fullName}
        {...register('fullName', FULL_NAME_RULE)}
      />
      <InputField
        id="edit-email"
        label="E-mail"
        error={e.email?.message}
        type="email"
        invalid={!!e.email}
        {...register('email', EMAIL_RULE)}
      />
      {isSelf ? (
        <p className="text-sm text-muted">
          Your own roles are changed by another administrator, never by yourself (segregation of duties).
        </p>
      ) : (
        <Controller control={control} name="roles" rules={ROLES_RULE} render={roleBoxes('edit-role')} />
      )}
      <TextareaField
        id="edit-reason"
        label="Reason for the change"
        hint="Kept in the audit trail with the old and new values."
        error={e.reason?.message}
        invalid={!!e.reason}
        {...register('reason', REASON_RULE)}
      />
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
