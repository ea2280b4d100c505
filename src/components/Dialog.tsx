/** Modal dialog on the native <dialog> element (focus stays inside; Escape closes unless busy). */
import { useEffect, useId, useRef, type ReactNode } from 'react';

export interface DialogProps {
  open: boolean;
  title: ReactNode;
  /** one line under the title */
  description?: ReactNode;
  onClose: () => void;
  /** while true, Escape does not close */
  busy?: boolean;
  children: ReactNode;
  width?: 'sm' | 'md' | 'lg';
}

const WIDTH = {
  sm: 'w-[min(28rem,calc(100vw-2rem))]',
  md: 'w-[min(36rem,calc(100vw-2rem))]',
  lg: 'w-[min(52rem,calc(100vw-2rem))]',
};

/** Opens and closes a native <dialog> as a modal with `open`; returns its ref and an id for labels. */
export function useModalDialog(open: boolean) {
  const ref = useRef<HTMLDialogElement>(null);
  const id = useId();
  useEffect(() => {
    const d = ref.current;
    if (!d) return;
    if (open && !d.open) d.showModal();
    else if (!open && d.open) d.close();
  }, [open]);
  return { ref, id };
}

export function Dialog({ open, title, description, onClose, busy, children, width = 'md' }: DialogProps) {
  const { ref, id } = useModalDialog(open);
  return (
    <dialog
      ref={ref}
      aria-labelledby={`${id}-t`}
      onCancel={(e) => {
        e.preventDefault();
        if (!busy) onClose();
      }}
      className={`m-auto rounded-lg border border-line bg-white p-0 text-ink shadow-xl backdrop:bg-ink/40 ${WIDTH[width]}`}
    >
      {open && (
        <div className="flex flex-col gap-4 p-6">
          <div>
            <h2 id={`${id}-t`} className="text-xl">
              {title}
            </h2>
            {description && <p className="mt-1 text-sm text-muted">{description}</p>}
          </div>
          {children}
        </div>
      )}
    </dialog>
  );
}
