/**
 * Spectral residual outside the principal-component model of a reference set: the Q
 * statistic (squared prediction error), Q = ||x - mean - sum_k t_k v_k||^2, the part of a
 * prepared spectrum that the model's components do not describe. The Mahalanobis
 * distance (nir.ts) judges a sample inside the model plane; Q judges how far it lies off
 * it. A material with bands the references lack (a polyethylene against a polypropylene
 * model) can lie close to the model mean in the plane and still far off it.
 *
 * The limit comes from the reference set itself, by leave-one-out and a moment fit:
 *  1. each reference is left out in turn, the model is built from the others with the
 *     same number of components, and the left-out reference's Q is computed; these n
 *     values are residuals of spectra the model has not seen, which in-sample residuals
 *     are not (with a few references the model passes close to every one of them, so
 *     in-sample Q, and limits built from the residual eigenvalues such as the
 *     Jackson-Mudholkar approximation, come out far too small for a new measurement);
 *  2. the n values are matched to g * chi-square(h) by their mean m and variance v
 *     (g = v / 2m, h = 2m^2 / v: Box 1954, as used for Q limits by Nomikos & MacGregor,
 *     Technometrics 1995; both from memory), and the limit is g times the chi-square
 *     quantile at the method's confidence.
 * The criterion reports Q divided by that limit, so 1 is the limit whatever the units of
 * the prepared spectra.
 *
 * Leave-one-out is computed from one Gram matrix of the reference set (n x n), not by
 * rebuilding n models over the full spectra: for the subset S without reference o, the
 * centred Gram matrix, the products with the left-out spectrum and its squared distance
 * to the subset mean all follow from the Gram entries, so Q_o = d_o - sum_k t_k^2 with
 * t_k = u_k . c_o / sqrt(lambda_k). tests/unit/spectra-residual.test.ts checks it against
 * explicit rebuilt models.
 */
import { chiSquareQuantile } from './chi-square';
import { type DistanceModel, rankFloor, scoresOf, symmetricEigen } from './nir';

/** Q of a vector against a model: squared norm of the part outside the model's components. */
export function residualQ(model: DistanceModel, vector: Float64Array): number {
  const t = scoresOf(model, vector);
  const { mean, loadings } = model;
  let q = 0;
  for (let j = 0; j < vector.length; j++) {
    let r = vector[j] - mean[j];
    for (let k = 0; k < t.length; k++) r -= t[k] * loadings[k][j];
    q += r * r;
  }
  return q;
}

/**
 * Leave-one-out Q of every vector against a model of the others with `components`
 * components. Returns null for a vector whose subset model has fewer than `components`
 * non-zero components (the references left are too few or too alike; zero as in nir.ts, rankFloor).
 */
export function leaveOneOutResiduals(vectors: Float64Array[], components: number): Array<number | null> {
  const n = vectors.length;
  const p = vectors[0]?.length ?? 0;
  // Centre on the mean of all n first: differences, and so every result, do not change,
  // and the Gram entries stay small next to the residuals (less cancellation).
  const all = new Float64Array(p);
  for (const v of vectors) for (let j = 0; j < p; j++) all[j] += v[j] / n;
  const x = vectors.map((v) => v.map((a, j) => a - all[j]));
  const gram = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let k = i; k < n; k++) {
      let s = 0;
      const a = x[i];
      const b = x[k];
      for (let j = 0; j < p; j++) s += a[j] * b[j];
      gram[i * n + k] = s;
      gram[k * n + i] = s;
    }
  }
  const out: Array<number | null> = [];
  const energy = rankFloor(0, vectors);
  for (let o = 0; o < n; o++) {
    const idx: number[] = [];
    for (let i = 0; i < n; i++) if (i !== o) idx.push(i);
    const m = idx.length;
    // a_i = x_i . mean_S for every i (including o); b = mean_S . mean_S.
    const a = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (const l of idx) s += gram[i * n + l];
      a[i] = s / m;
    }
    let b = 0;
    for (const l of idx) b += a[l];
    b /= m;
    const centred = new Float64Array(m * m);
    for (let r = 0; r < m; r++) {
      for (let c = 0; c < m; c++) {
        const i = idx[r];
        const j = idx[c];
        centred[r * m + c] = gram[i * n + j] - a[i] - a[j] + b;
      }
    }
    const co = Float64Array.from(idx, (i) => gram[i * n + o] - a[i] - a[o] + b);
    const d = gram[o * n + o] - 2 * a[o] + b;
    const { values, vectors: u } = symmetricEigen(centred, m);
    let explained = 0;
    let used = 0;
    for (let k = 0; k < Math.min(components, m - 1); k++) {
      const lambda = values[k];
      if (!(lambda > Math.max(values[0] * 1e-12, energy))) break;
      let t = 0;
      for (let r = 0; r < m; r++) t += u[k][r] * co[r];
      explained += (t * t) / lambda;
      used++;
    }
    out.push(used < components ? null : Math.max(0, d - explained));
  }
  return out;
}

export interface ResidualLimit {
  /** The Q limit at the confidence. */
  limit: number;
  confidence: number;
  /** Moment fit g * chi-square(h) of the leave-one-out residuals. */
  g: number;
  h: number;
  /** The leave-one-out residuals the limit was fitted to. */
  leaveOneOut: number[];
}

/**
 * The Q limit from leave-one-out residuals (see the top of this file), or a sentence
 * saying why none can be derived.
 */
export function residualLimit(leaveOneOut: number[], confidence: number): ResidualLimit | string {
  const n = leaveOneOut.length;
  if (n < 3) return `A residual limit needs at least 3 references (there are ${n}).`;
  const mean = leaveOneOut.reduce((s, v) => s + v, 0) / n;
  const variance = leaveOneOut.reduce((s, v) => s + (v - mean) ** 2, 0) / (n - 1);
  if (!(mean > 0) || !(variance > 0)) {
    return 'The references leave no residual variation outside the model (identical or copied spectra?), so no residual limit can be derived.';
  }
  const g = variance / (2 * mean);
  const h = (2 * mean * mean) / variance;
  const limit = g * chiSquareQuantile(confidence, h);
  if (!Number.isFinite(limit) || limit <= 0) return 'The residual limit could not be computed from the references.';
  return { limit, confidence, g, h, leaveOneOut };
}
