/**
 * Clock offsets (docs/instrument-intake.md, "Clocks"): the time a file states it was acquired
 * (a JCAMP-DX time carries no zone: read in the instrument clock's zone) against the moment the
 * server received it from the export folder. A file reaches the folder within seconds of the
 * scan, so an offset beyond the site's tolerance (CLOCK_TOLERANCE_MINUTES, default 5, the same
 * tolerance the provenance rules give an acquisition "in the future") means the instrument clock
 * is wrong or the file was held back; the verifier is warned. Pure: no I/O.
 */

/** Seconds from the stated acquisition to the receipt (positive: acquired before it arrived). */
export function clockOffsetSeconds(acquiredAt: Date | null, receivedAt: Date): number | null {
  return acquiredAt ? Math.round((receivedAt.getTime() - acquiredAt.getTime()) / 1000) : null;
}

/** The verifier's warning, or null when the offset is unknown or within the tolerance. */
export function clockWarning(offsetSeconds: number | null, toleranceMinutes: number): string | null {
  if (offsetSeconds === null || Math.abs(offsetSeconds) <= toleranceMinutes * 60) return null;
  const min = Math.round(Math.abs(offsetSeconds) / 6) / 10;
  return offsetSeconds > 0
    ? `The file states an acquisition time ${min} min before it reached the server (site tolerance ${toleranceMinutes} min): the instrument clock may be wrong, or the file was held back. Check before relying on the stated time.`
    : `The file states an acquisition time ${min} min after it reached the server (site tolerance ${toleranceMinutes} min): the instrument clock runs ahead. Check before relying on the stated time.`;
}
