/**
 * Version of the spectral engine. Every identity result, instrument check and
 * specificity report carries it, so a stored verdict can always be traced to the
 * exact algorithm that produced it. Bump it whenever a change could alter a
 * number in a result (semantic versioning: major = verdicts may change).
 */
export const ENGINE_VERSION = '2.0.0';

/*
 * 2.0.0: the shift tolerance of a band is widened by its width only for broad bands
 * (full width at half height of at least 80 cm-1); a sharp band keeps its positional
 * tolerance (bands.ts). Band rows state the rule that set their tolerance. Optional
 * relative band intensity criterion (intensity.ts; off unless the method sets it).
 * Spectral residual (Q) beside the Mahalanobis distance, with a limit derived from the
 * references (residual.ts; on in the default NIR method). A reference-set criterion the
 * method asks for is never dropped: when the model cannot be built the result fails on
 * "reference-model" and says why (reference-model.ts). Resampling through
 * ml-spectra-processing (resample.ts): within 1e-15 of each spectrum of 1.0.0's numbers.
 * Correlation table: carboxylate (asymmetric, symmetric), amide III region and CH2
 * rocking added, the water bend no longer tied to a broad shape (assignment texts of
 * bands in those ranges change); candidates ranked by partner bands (candidates.ts).
 */
