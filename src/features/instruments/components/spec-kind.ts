/** Words for the kinds of check specification. */
export function specKindText(kind: string): string {
  switch (kind) {
    case 'pharmacopoeia-ft':
      return 'Ph. Eur. 2.2.24, FT tolerances';
    case 'pharmacopoeia-monochromator':
      return 'Ph. Eur. 2.2.24, monochromator tolerances';
    case 'site':
      return 'site specification (QA-approved)';
    default:
      return kind;
  }
}
