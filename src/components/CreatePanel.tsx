/**
 * The create flow of a list page (materials, instruments, accounts): a primary button in the page
 * header opens a panel with the form above the list; the form's Cancel, or what it does once the
 * record exists, closes it. The button shows only to those allowed to create.
 */
import { useId, useState, type ReactNode } from 'react';
import { Button } from './Button';

export interface CreatePanelOptions {
  /** the button's words, e.g. "New material" */
  label: string;
  /** the panel's heading, e.g. "New material" */
  title: string;
  /** whether the signed-in user may create (default: yes) */
  allowed?: boolean;
  /** called when the panel opens (e.g. to clear an earlier notice) */
  onOpen?: () => void;
}

export function useCreatePanel({ label, title, allowed = true, onOpen }: CreatePanelOptions) {
  const [open, setOpen] = useState(false);
  const id = useId();
  const close = () => setOpen(false);
  const button =
    allowed && !open ? (
      <Button
        variant="primary"
        onClick={() => {
          setOpen(true);
          onOpen?.();
        }}
      >
        {label}
      </Button>
    ) : null;
  /** The panel with the form `form(close)` when open, else nothing. */
  const panel = (form: (close: () => void) => ReactNode) =>
    open ? (
      <section aria-labelledby={id} className="mb-6 rounded-md border border-line bg-white p-4">
        <h2 id={id} className="mb-3 text-lg">
          {title}
        </h2>
        {form(close)}
      </section>
    ) : null;
  return { open, button, panel, close };
}
