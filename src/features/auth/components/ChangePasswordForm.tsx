import { useForm } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input } from '../../../components/Field';
import { useChangePassword } from '../api';

export const MIN_PASSWORD_LENGTH = 12;

interface Values {
  currentPassword: string;
  newPassword: string;
  confirm: string;
}

export interface ChangePasswordFormProps {
  username: string;
  /** the account was created or reset by an administrator: the current password is the temporary one */
  forced: boolean;
  onChanged: () => void;
}

export function ChangePasswordForm({ username, forced, onChanged }: ChangePasswordFormProps) {
  const change = useChangePassword();
  const { register, handleSubmit, formState } = useForm<Values>({
    defaultValues: { currentPassword: '', newPassword: '', confirm: '' },
  });
  const e = formState.errors;
  const submit = handleSubmit((v) =>
    change.mutate({ currentPassword: v.currentPassword, newPassword: v.newPassword }, { onSuccess: onChanged }),
  );
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label="Change password">
      {/* lets password managers file the new password under the right account */}
      <input type="text" name="username" autoComplete="username" value={username} readOnly hidden />
      <Field
        id="currentPassword"
        label={forced ? 'Temporary password' : 'Current password'}
        error={e.currentPassword?.message}
      >
        <Input
          id="currentPassword"
          bench
          type="password"
          autoComplete="current-password"
          autoFocus
          invalid={!!e.currentPassword}
          {...register('currentPassword', {
            required: forced ? 'Enter the temporary password you were given.' : 'Enter your current password.',
          })}
        />
      </Field>
      <Field
        id="newPassword"
        label="New password"
        hint={`At least ${MIN_PASSWORD_LENGTH} characters, hard to guess (a few unrelated words work well), without your user name, and none of your last five passwords.`}
        error={e.newPassword?.message}
      >
        <Input
          id="newPassword"
          bench
          type="password"
          autoComplete="new-password"
          invalid={!!e.newPassword}
          {...register('newPassword', {
            required: 'Enter a new password.',
            minLength: {
              value: MIN_PASSWORD_LENGTH,
              message: `The new password must have at least ${MIN_PASSWORD_LENGTH} characters.`,
            },
            maxLength: { value: 200, message: 'The password must have at most 200 characters.' },
            validate: {
              noUsername: (v) =>
                !v.toLowerCase().includes(username.toLowerCase()) || 'The password must not contain the user name.',
              differs: (v, all) => v !== all.currentPassword || 'The new password must differ from the current one.',
            },
          })}
        />
      </Field>
      <Field id="confirm" label="New password again" error={e.confirm?.message}>
        <Input
          id="confirm"
          bench
          type="password"
          autoComplete="new-password"
          invalid={!!e.confirm}
          {...register('confirm', {
            required: 'Type the new password a second time.',
            validate: (v, all) => v === all.newPassword || 'The two new passwords differ. Type them again.',
          })}
        />
      </Field>
      {change.isError && <ErrorNote error={change.error} />}
      <Button type="submit" variant="primary" size="bench" busy={change.isPending}>
        Change password
      </Button>
    </form>
  );
}
