import { useForm } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Textarea } from '../../../components/Field';
import { useResetPassword, type UserAccount } from '../api';
import { REASON_RULE, suggestPassword, TEMP_PASSWORD_RULE } from './fields';

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
      <Field
        id="reset-password"
        label="Temporary password"
        hint="At least 12 characters, hard to guess, not one of the account's last five passwords. The person must change it at next sign-in; their open sessions end."
        error={e.temporaryPassword?.message}
      >
        <div className="flex gap-2">
          <Input
            id="reset-password"
            autoComplete="new-password"
            spellCheck={false}
            className="font-mono"
            invalid={!!e.temporaryPassword}
            {...register('temporaryPassword', TEMP_PASSWORD_RULE)}
          />
          <Button onClick={() => setValue('temporaryPassword', suggestPassword(), { shouldValidate: true })}>
            Suggest
          </Button>
        </div>
      </Field>
      <Field id="reset-reason" label="Reason" hint="Kept in the audit trail." error={e.reason?.message}>
        <Textarea id="reset-reason" invalid={!!e.reason} {...register('reason', REASON_RULE)} />
      </Field>
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
