/**
 * Form field: label above, control, then hint or error in words. The control gets the id given
 * here (use Input/Select/Textarea below, or any element with that id).
 */
import type { InputHTMLAttributes, ReactNode, Ref, SelectHTMLAttributes, TextareaHTMLAttributes } from 'react';

export interface FieldProps {
  id: string;
  label: ReactNode;
  hint?: ReactNode;
  /** the error sentence (from the form or the server) */
  error?: string;
  required?: boolean;
  children: ReactNode;
  className?: string;
}

export function Field({ id, label, hint, error, required, children, className = '' }: FieldProps) {
  return (
    <div className={`flex flex-col gap-1 ${className}`}>
      <label htmlFor={id} className="text-sm font-medium text-ink">
        {label}
        {required && <span className="text-muted font-normal"> (required)</span>}
      </label>
      {children}
      {error ? (
        <p id={`${id}-error`} role="alert" className="text-sm text-fail">
          {error}
        </p>
      ) : hint ? (
        <p id={`${id}-hint`} className="text-sm text-muted">
          {hint}
        </p>
      ) : null}
    </div>
  );
}

const CONTROL =
  'w-full rounded-md border border-line bg-white px-3 text-ink placeholder:text-muted/70 focus:border-petrol focus:outline-none focus:ring-2 focus:ring-petrol-soft aria-[invalid=true]:border-fail disabled:bg-paper disabled:text-muted';

export interface InputProps extends InputHTMLAttributes<HTMLInputElement> {
  /** 44 px high on bench screens */
  bench?: boolean;
  invalid?: boolean;
  ref?: Ref<HTMLInputElement>;
}
export function Input({ bench, invalid, className = '', ref, ...rest }: InputProps) {
  return (
    <input
      ref={ref}
      aria-invalid={invalid || undefined}
      className={`${CONTROL} ${bench ? 'min-h-11 text-base' : 'min-h-9 text-sm'} ${className}`}
      {...rest}
    />
  );
}

export interface SelectProps extends SelectHTMLAttributes<HTMLSelectElement> {
  bench?: boolean;
  invalid?: boolean;
  ref?: Ref<HTMLSelectElement>;
}
export function Select({ bench, invalid, className = '', ref, children, ...rest }: SelectProps) {
  return (
    <select
      ref={ref}
      aria-invalid={invalid || undefined}
      className={`${CONTROL} ${bench ? 'min-h-11 text-base' : 'min-h-9 text-sm'} ${className}`}
      {...rest}
    >
      {children}
    </select>
  );
}

export interface TextareaProps extends TextareaHTMLAttributes<HTMLTextAreaElement> {
  invalid?: boolean;
  ref?: Ref<HTMLTextAreaElement>;
}
export function Textarea({ invalid, className = '', ref, ...rest }: TextareaProps) {
  return (
    <textarea
      ref={ref}
      aria-invalid={invalid || undefined}
      className={`${CONTROL} min-h-20 py-2 text-sm ${className}`}
      {...rest}
    />
  );
}

/** What a field row shows around its control: the label, and a hint or an error in words. */
export interface FieldRowProps {
  id: string;
  label: ReactNode;
  hint?: ReactNode;
  error?: string;
  /** classes of the row (the Field), e.g. a grid span */
  fieldClassName?: string;
}

/** A labelled input: the Field and its Input under one id. */
export function InputField({ id, label, hint, error, fieldClassName, ...input }: FieldRowProps & InputProps) {
  return (
    <Field id={id} label={label} hint={hint} error={error} className={fieldClassName}>
      <Input id={id} {...input} />
    </Field>
  );
}

/** A labelled select: the Field and its Select under one id. */
export function SelectField({ id, label, hint, error, fieldClassName, ...select }: FieldRowProps & SelectProps) {
  return (
    <Field id={id} label={label} hint={hint} error={error} className={fieldClassName}>
      <Select id={id} {...select} />
    </Field>
  );
}

/** A labelled text area: the Field and its Textarea under one id. */
export function TextareaField({ id, label, hint, error, fieldClassName, ...area }: FieldRowProps & TextareaProps) {
  return (
    <Field id={id} label={label} hint={hint} error={error} className={fieldClassName}>
      <Textarea id={id} {...area} />
    </Field>
  );
}
