/** Asks the reason for a one-step account action (deactivate, reactivate, unlock). */
import { useForm } from 'react-hook-form';
import { Button, type ButtonVariant } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Textarea } from '../../../components/Field';
import { REASON_RULE } from './fields';

export interface ReasonFormProps {
  confirmLabel: string;
  variant?: ButtonVariant;
  busy?: boolean;
  error?: unknown;
  onConfirm: (reason: string) => void;
  onCancel: () => void;
}

export function ReasonForm({ confirmLabel, variant = 'primary', busy, error, onConfirm, onCancel }: ReasonFormProps) {
  const { register, handleSubmit, formState } = useForm<{ reason: string }>({ defaultValues: { reason: '' } });
  return (
    <form onSubmit={handleSubmit((v) => onConfirm(v.reason.trim()))} noValidate className="flex flex-col gap-4">
      <Field id="action-reason" label="Reason" hint="Kept in the audit trail." error={formState.errors.reason?.message}>
        <Textarea
          id="action-reason"
          autoFocus
          invalid={!!formState.errors.reason}
          {...register('reason', REASON_RULE)}
        />
      </Field>
      {!!error && <ErrorNote error={error} />}
      <div className="flex justify-end gap-2">
        <Button onClick={onCancel} disabled={busy}>
          Cancel
        </Button>
        <Button type="submit" variant={variant} busy={busy}>
          {confirmLabel}
        </Button>
      </div>
    </form>
  );
}
