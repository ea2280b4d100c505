/**
 * Quantile of the chi-square distribution with k degrees of freedom (k > 0, not
 * necessarily whole), for the limit of the spectral residual (residual.ts).
 *
 * The distribution function is the regularised lower incomplete gamma function,
 * F(x; k) = P(k/2, x/2), evaluated by its power series below a + 1 and by its continued
 * fraction (modified Lentz) above (the textbook pair, e.g. Press et al., Numerical
 * Recipes, section 6.2; from memory), with ln Gamma from simple-statistics (Lanczos).
 * The quantile is found by bisection on F, to about 1e-12 relative: slow next to Newton's
 * method but it cannot diverge, and it runs once per reference-set model.
 * Above MAX_EXACT_DOF degrees of freedom the Wilson-Hilferty cube-root approximation
 * (Wilson & Hilferty 1931; from memory) is used; it is exact there to far better than the
 * model's own uncertainty.
 */
import { gammaln, probit } from 'simple-statistics';

export const MAX_EXACT_DOF = 1000;

/** Regularised lower incomplete gamma function P(a, x), a > 0, x >= 0. */
export function regularisedGammaP(a: number, x: number): number {
  if (!(a > 0) || !(x >= 0)) return Number.NaN;
  if (x === 0) return 0;
  const logPrefix = -x + a * Math.log(x) - gammaln(a);
  if (x < a + 1) {
    let term = 1 / a;
    let sum = term;
    for (let n = 1; n < 10_000; n++) {
      term *= x / (a + n);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-16) break;
    }
    return Math.min(1, sum * Math.exp(logPrefix));
  }
  // Continued fraction for Q(a, x) = 1 - P(a, x).
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 10_000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-16) break;
  }
  return Math.max(0, 1 - Math.exp(logPrefix) * h);
}

/** Distribution function of chi-square with k degrees of freedom at x. */
export function chiSquareCdf(x: number, k: number): number {
  return regularisedGammaP(k / 2, x / 2);
}

/** The p-quantile (0 < p < 1) of chi-square with k > 0 degrees of freedom. */
export function chiSquareQuantile(p: number, k: number): number {
  if (!(p > 0 && p < 1) || !(k > 0) || !Number.isFinite(k)) {
    throw new RangeError(`chi-square quantile needs 0 < p < 1 and k > 0 (got p = ${p}, k = ${k}).`);
  }
  if (k > MAX_EXACT_DOF) {
    const z = probit(p);
    const c = 2 / (9 * k);
    return k * (1 - c + z * Math.sqrt(c)) ** 3;
  }
  let lo = 0;
  let hi = Math.max(1, k);
  while (chiSquareCdf(hi, k) < p) hi *= 2;
  for (let i = 0; i < 200 && hi - lo > 1e-13 * hi; i++) {
    const mid = (lo + hi) / 2;
    if (chiSquareCdf(mid, k) < p) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}
