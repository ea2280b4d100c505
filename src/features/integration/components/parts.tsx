/** Pieces the two integration lists share: the secret shown once, the choice boxes, the create footer. */
import { useState, type ReactNode } from 'react';
import type { z } from 'zod';
import { Button } from '../../../components/Button';
import { Panel } from '../../../components/Panel';
import { errorMessage } from '../../../lib/api';

/** A token or secret shown this once (only its hash, or nothing, is kept to show again). */
export function ShownOnce({
  testId,
  heading,
  value,
  stored,
  onDismiss,
}: {
  testId: string;
  heading: ReactNode;
  value: string;
  /** the button's words, e.g. "I have stored the token" */
  stored: string;
  onDismiss: () => void;
}) {
  return (
    <div className="mb-3 rounded-md border border-amber/50 bg-amber-soft p-3 text-sm" data-testid={testId}>
      <p className="font-medium text-amber-ink">{heading}</p>
      <code className="break-all">{value}</code>
      <div className="mt-2">
        <Button size="desk" onClick={onDismiss}>
          {stored}
        </Button>
      </div>
    </div>
  );
}

/** One check box per choice; the ticked ones in the order they were ticked. */
export function Choices<T extends string>({
  legend,
  choices,
  value,
  onChange,
  words = (c) => c,
  className = '',
  inline = false,
}: {
  legend: string;
  choices: readonly T[];
  value: T[];
  onChange: (next: T[]) => void;
  words?: (choice: T) => ReactNode;
  className?: string;
  /** side by side, wrapping, instead of one under the other */
  inline?: boolean;
}) {
  const boxes = choices.map((c) => (
    <label key={c} className="flex items-center gap-2">
      <input
        type="checkbox"
        checked={value.includes(c)}
        onChange={(e) => onChange(e.target.checked ? [...value, c] : value.filter((x) => x !== c))}
      />
      {words(c)}
    </label>
  ));
  return (
    <fieldset className={`text-sm ${className}`}>
      <legend className="mb-1 font-medium">{legend}</legend>
      {inline ? <div className="flex flex-wrap gap-3">{boxes}</div> : boxes}
    </fieldset>
  );
}

/** Checks a new record's input with its contract schema before sending; the first problem in words. */
export function useChecked() {
  const [problem, setProblem] = useState<string | null>(null);
  const check = <T,>(schema: z.ZodType<T>, input: unknown): T | null => {
    const parsed = schema.safeParse(input);
    if (!parsed.success) {
      setProblem(parsed.error.issues[0]?.message ?? 'Check the form.');
      return null;
    }
    setProblem(null);
    return parsed.data;
  };
  return { problem, check };
}

/** The problem or the server's answer, then the button that sends. */
export function CreateFooter({
  problem,
  mutation,
  onSubmit,
  children,
}: {
  problem: string | null;
  mutation: { isError: boolean; error: unknown; isPending: boolean };
  onSubmit: () => void;
  children: ReactNode;
}) {
  return (
    <>
      {(problem || mutation.isError) && (
        <p className="mt-2 text-sm text-fail" role="alert">
          {problem ?? errorMessage(mutation.error)}
        </p>
      )}
      <Button className="mt-3" size="desk" variant="primary" disabled={mutation.isPending} onClick={onSubmit}>
        {children}
      </Button>
    </>
  );
}

/** One of the integration lists: a titled panel. */
export function ListPanel({ id, title, children }: { id: string; title: string; children: ReactNode }) {
  return (
    <Panel id={id} title={title} className="p-4" titleClassName="mb-2 text-lg">
      {children}
    </Panel>
  );
}

/** The fields of a new record under the list, two to a line on wide screens. */
export function NewRecordFields({ title, children }: { title: string; children: ReactNode }) {
  return (
    <>
      <h3 className="mb-2 font-medium">{title}</h3>
      <div className="grid gap-3 md:grid-cols-2">{children}</div>
    </>
  );
}

/**
 * The create flow of both lists: the input checked with its schema, sent, and on success the
 * value shown once (token, secret) kept and the fields cleared.
 */
export function useCreateShownOnce<I, R, O>(
  schema: z.ZodType<I>,
  mutation: { mutate: (input: I, options: { onSuccess: (created: R) => void }) => void },
  keep: (created: R) => O,
) {
  const { problem, check } = useChecked();
  const [once, setOnce] = useState<O | null>(null);
  const submit = (input: unknown, clear: () => void) => {
    const checked = check(schema, input);
    if (!checked) return;
    mutation.mutate(checked, {
      onSuccess: (created) => {
        setOnce(keep(created));
        clear();
      },
    });
  };
  return { problem, submit, once, dismiss: () => setOnce(null) };
}
