import { useForm } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { TextareaField } from '../../../components/Field';
import { useResetPassword, type UserAccount } from '../api';
import { REASON_RULE, TEMP_PASSWORD_RULE, TemporaryPasswordField } from './fields';

export function ResetPasswordForm({
  user,
  onDone,
  onCancel,
}: {
  user: UserAccount;
  onDone: (temporaryPassword: string) => void;
  onCancel: () => void;
}) {
  const reset = useResetPassword();
  const { register, handleSubmit, setValue, formState } = useForm<{ temporaryPassword: string; reason: string }>({
    defaultValues: { temporaryPassword: '', reason: '' },
  });
  const e = formState.errors;
  const submit = handleSubmit((v) =>
    reset.mutate(
      { id: user.id, temporaryPassword: v.temporaryPassword, reason: v.reason.trim() },
      { onSuccess: () => onDone(v.temporaryPassword) },
    ),
  );
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4">
      <TemporaryPasswordField
        id="reset-password"
        hint="At least 12 characters, hard to guess, not one of the account's last five passwords. The person must change it at next sign-in; their open sessions end."
        error={e.temporaryPassword?.message}
        registration={register('temporaryPassword', TEMP_PASSWORD_RULE)}
        onSuggest={(p) => setValue('temporaryPassword', p, { shouldValidate: true })}
      />
      <TextareaField
        id="reset-reason"
        label="Reason"
        hint="Kept in the audit trail."
        error={e.reason?.message}
        invalid={!!e.reason}
        {...register('reason', REASON_RULE)}
      />
      {reset.isError && <ErrorNote error={reset.error} />}
      <div className="flex justify-end gap-2">
        <Button onClick={onCancel} disabled={reset.isPending}>
          Cancel
        </Button>
        <Button type="submit" variant="primary" busy={reset.isPending}>
          Set temporary password
        </Button>
      </div>
    </form>
  );
}
