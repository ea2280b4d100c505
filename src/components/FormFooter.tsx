/** The end of a create form: the server's answer, the primary button that sends, and Cancel. */
import { Button } from './Button';
import { ErrorNote } from './ErrorNote';

export function FormFooter({
  mutation,
  submitLabel,
  onCancel,
  span,
}: {
  mutation: { isPending: boolean; isError: boolean; error: unknown };
  submitLabel: string;
  onCancel: () => void;
  /** the grid span of both rows, e.g. "md:col-span-2" */
  span: string;
}) {
  return (
    <>
      {mutation.isError && <ErrorNote error={mutation.error} className={span} />}
      <div className={`flex gap-2 ${span}`}>
        <Button type="submit" variant="primary" busy={mutation.isPending}>
          {submitLabel}
        </Button>
        <Button onClick={onCancel}>Cancel</Button>
      </div>
    </>
  );
}
