/** A panel sliding in from the right over the page (native <dialog>: focus stays inside, Escape closes). */
import type { ReactNode } from 'react';
import { useModalDialog } from '../../../components/Dialog';

export interface DrawerProps {
  open: boolean;
  title: ReactNode;
  subtitle?: ReactNode;
  onClose: () => void;
  children: ReactNode;
  /** width of the panel */
  wide?: boolean;
}

export function Drawer({ open, title, subtitle, onClose, children, wide }: DrawerProps) {
  const { ref, id } = useModalDialog(open);
  return (
    <dialog
      ref={ref}
      aria-labelledby={`${id}-t`}
      onCancel={(e) => {
        e.preventDefault();
        onClose();
      }}
      onClick={(e) => {
        if (e.target === ref.current) onClose(); // a click on the backdrop
      }}
      className={`fixed inset-y-0 right-0 left-auto m-0 h-full max-h-none border-l border-line bg-paper p-0 text-ink shadow-2xl backdrop:bg-ink/30 ${
        wide ? 'w-[min(64rem,100vw)]' : 'w-[min(44rem,100vw)]'
      }`}
    >
      {open && (
        <div className="flex h-full flex-col">
          <div className="flex items-start justify-between gap-3 border-b border-line bg-white px-5 py-3">
            <div className="min-w-0">
              <h2 id={`${id}-t`} className="text-xl">
                {title}
              </h2>
              {subtitle && <p className="mt-0.5 text-sm text-muted">{subtitle}</p>}
            </div>
            <button
              type="button"
              onClick={onClose}
              className="min-h-9 shrink-0 rounded-md border border-line bg-white px-3 text-sm hover:border-petrol hover:text-petrol"
            >
              Close
            </button>
          </div>
          <div className="min-h-0 flex-1 overflow-y-auto px-5 py-4">{children}</div>
        </div>
      )}
    </dialog>
  );
}
