/**
 * Version of the spectral engine. Every identity result, instrument check and
 * specificity report carries it, so a stored verdict can always be traced to the
 * exact algorithm that produced it. Bump it whenever a change could alter a
 * number in a result (semantic versioning: major = verdicts may change).
 */
export const ENGINE_VERSION = '1.0.0';
