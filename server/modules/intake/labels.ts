/** Which container a file from an export folder names (docs/instrument-intake.md). Pure. */
import { LABEL_PATTERN, labelsInFileName } from '../testing';

/** Container labels named by a file: in its name, its title and its sample identifier (distinct, upper case). */
export function labelsOfFile(fileName: string, title: string | null | undefined, sample: string | null | undefined) {
  const inside = [title ?? '', sample ?? ''].flatMap((t) =>
    [...t.matchAll(LABEL_PATTERN)].map((m) => m[0].toUpperCase()),
  );
  return [...new Set([...labelsInFileName(fileName), ...inside])];
}
