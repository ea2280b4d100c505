import { Controller, useForm } from 'react-hook-form';
import { FormFooter } from '../../../components/FormFooter';
import { Field, Input, InputField } from '../../../components/Field';
import { useCreateUser, type CreateUserInput, type UserAccount } from '../api';
import {
  EMAIL_RULE,
  FULL_NAME_RULE,
  roleBoxes,
  ROLES_RULE,
  TEMP_PASSWORD_RULE,
  TemporaryPasswordField,
} from './fields';

export function CreateUserForm({
  onCreated,
  onCancel,
}: {
  onCreated: (u: UserAccount, temporaryPassword: string) => void;
  onCancel: () => void;
}) {
  const create = useCreateUser();
  const { register, handleSubmit, control, setValue, formState } = useForm<CreateUserInput>({
    defaultValues: { username: '', fullName: '', email: '', roles: [], temporaryPassword: '' },
  });
  const e = formState.errors;
  const submit = handleSubmit((v) =>
    create.mutate(
      { ...v, username: v.username.trim(), fullName: v.fullName.trim(), email: v.email.trim() },
      { onSuccess: (u) => onCreated(u, v.temporaryPassword) },
    ),
  );
  return (
    <form onSubmit={submit} noValidate className="grid gap-4 md:grid-cols-2" aria-label="New account">
      <Field
        id="new-username"
        label="User name"
        hint="Lower-case letters, digits, dot, dash or underscore. It cannot change later."
        error={e.username?.message}
      >
        <Input
          id="new-username"
          autoCapitalize="none"
          spellCheck={false}
          autoComplete="off"
          invalid={!!e.username}
          {...register('username', {
            required: 'Enter a user name.',
            minLength: { value: 3, message: 'The user name needs at least 3 characters.' },
            maxLength: { value: 64, message: 'The user name may have at most 64 characters.' },
            pattern: { value: /^[a-z0-9._-]+$/, message: 'Use lower-case letters, digits, dot, dash or underscore.' },
          })}
        />
      </Field>
      <InputField
        id="new-fullname"
        label="Full name"
        hint="Printed beside every signature of this person."
        error={e.fullName?.message}
        autoComplete="off"
        invalid={!!e.fullName}
        {...register('fullName', FULL_NAME_RULE)}
      />
      <InputField
        id="new-email"
        label="E-mail"
        error={e.email?.message}
        type="email"
        autoComplete="off"
        invalid={!!e.email}
        {...register('email', EMAIL_RULE)}
      />
      <TemporaryPasswordField
        id="new-password"
        hint="At least 12 characters and hard to guess (a few unrelated words work well). The person must change it at first sign-in; hand it over in person."
        error={e.temporaryPassword?.message}
        registration={register('temporaryPassword', TEMP_PASSWORD_RULE)}
        onSuggest={(p) => setValue('temporaryPassword', p, { shouldValidate: true })}
      />
      <div className="md:col-span-2">
        <Controller control={control} name="roles" rules={ROLES_RULE} render={roleBoxes('new-role')} />
      </div>
      <FormFooter mutation={create} submitLabel="Create account" onCancel={onCancel} span="md:col-span-2" />
    </form>
  );
}
