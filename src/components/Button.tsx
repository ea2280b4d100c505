import type { ButtonHTMLAttributes, Ref } from 'react';

export type ButtonVariant = 'primary' | 'secondary' | 'danger' | 'quiet';
export type ButtonSize = 'desk' | 'bench';

export interface ButtonProps extends ButtonHTMLAttributes<HTMLButtonElement> {
  variant?: ButtonVariant;
  /** 'bench': at least 44 px high and wide for gloved hands (operator/verifier screens); 'desk': compact */
  size?: ButtonSize;
  /** shows a busy state and disables the button */
  busy?: boolean;
  ref?: Ref<HTMLButtonElement>;
}

const VARIANTS: Record<ButtonVariant, string> = {
  primary: 'bg-petrol text-white border-petrol hover:bg-petrol-dark',
  secondary: 'bg-white text-ink border-line hover:border-petrol hover:text-petrol',
  danger: 'bg-white text-fail border-fail/60 hover:bg-fail-soft',
  quiet: 'bg-transparent text-petrol border-transparent hover:bg-petrol-soft',
};
const SIZES: Record<ButtonSize, string> = {
  desk: 'min-h-9 px-3 text-sm',
  bench: 'min-h-11 min-w-11 px-5 text-base',
};

export function buttonClass(variant: ButtonVariant = 'secondary', size: ButtonSize = 'desk', extra = ''): string {
  return [
    'inline-flex items-center justify-center gap-2 rounded-md border font-medium transition-colors',
    'disabled:cursor-not-allowed disabled:opacity-50',
    VARIANTS[variant],
    SIZES[size],
    extra,
  ].join(' ');
}

export function Button({
  variant = 'secondary',
  size = 'desk',
  busy,
  disabled,
  className = '',
  children,
  type = 'button',
  ref,
  ...rest
}: ButtonProps) {
  return (
    <button
      ref={ref}
      type={type}
      className={buttonClass(variant, size, className)}
      disabled={disabled || busy}
      aria-busy={busy || undefined}
      {...rest}
    >
      {busy && (
        <span
          aria-hidden
          className="inline-block size-3.5 animate-spin rounded-full border-2 border-current border-r-transparent"
        />
      )}
      {children}
    </button>
  );
}
