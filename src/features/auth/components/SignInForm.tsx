import { useForm } from 'react-hook-form';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input } from '../../../components/Field';
import type { SignInResult } from '../../../../server/modules/auth/contract';
import { useSignIn, type SignInInput } from '../api';

export function SignInForm({ onSignedIn }: { onSignedIn: (user: SignInResult['user']) => void }) {
  const signIn = useSignIn();
  const { register, handleSubmit, formState } = useForm<SignInInput>({ defaultValues: { username: '', password: '' } });
  const submit = handleSubmit((v) =>
    signIn.mutate({ username: v.username.trim(), password: v.password }, { onSuccess: (r) => onSignedIn(r.user) }),
  );
  return (
    <form onSubmit={submit} noValidate className="flex flex-col gap-4" aria-label="Sign in">
      <Field id="username" label="User name" error={formState.errors.username?.message}>
        <Input
          id="username"
          bench
          autoComplete="username"
          autoCapitalize="none"
          spellCheck={false}
          autoFocus
          invalid={!!formState.errors.username}
          {...register('username', { required: 'Enter your user name.' })}
        />
      </Field>
      <Field id="password" label="Password" error={formState.errors.password?.message}>
        <Input
          id="password"
          bench
          type="password"
          autoComplete="current-password"
          invalid={!!formState.errors.password}
          {...register('password', { required: 'Enter your password.' })}
        />
      </Field>
      {signIn.isError && <ErrorNote error={signIn.error} />}
      <Button type="submit" variant="primary" size="bench" busy={signIn.isPending} className="w-full">
        Sign in
      </Button>
    </form>
  );
}
