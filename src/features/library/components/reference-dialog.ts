/** What the reference page hands to the dialogs that sign a decision on one reference. */
export interface ReferenceDialogProps {
  open: boolean;
  referenceId: number;
  code: string;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
}
