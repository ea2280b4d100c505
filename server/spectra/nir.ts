/**
 * Distance of a prepared spectrum to a set of reference spectra: Mahalanobis
 * distance on principal-component scores (D^2 = sum_k t_k^2 / s_k^2 over the first K
 * components; ../shared/domain-facts.md section 2, limit often 3 in SD units,
 * common practice). Reported as sqrt(D^2 / K), i.e. in RMS standard deviations
 * per component, so a typical reference spectrum scores about 1.
 *
 * PCA: with n references of p points (n << p) the eigenvectors of the n x n Gram
 * matrix of the mean-centred data give the components exactly (loading
 * v_k = X^T u_k / sqrt(lambda_k)); the small symmetric eigenproblem is solved by
 * cyclic Jacobi rotations. No PCA package is needed.
 */

export interface DistanceModel {
  mean: Float64Array;
  /** K loading vectors of length p (unit norm). */
  loadings: Float64Array[];
  /** Variance of the reference scores along each component (divisor n - 1). */
  variances: Float64Array;
  references: number;
}

/** Eigen-decomposition of a symmetric matrix (row-major n x n), eigenvalues descending. */
export function symmetricEigen(a: Float64Array, n: number): { values: Float64Array; vectors: Float64Array[] } {
  const m = Float64Array.from(a);
  const v = new Float64Array(n * n);
  for (let i = 0; i < n; i++) v[i * n + i] = 1;
  for (let sweep = 0; sweep < 100; sweep++) {
    let off = 0;
    for (let i = 0; i < n; i++) for (let j = i + 1; j < n; j++) off += m[i * n + j] ** 2;
    if (off < 1e-24) break;
    for (let p = 0; p < n; p++) {
      for (let q = p + 1; q < n; q++) {
        const apq = m[p * n + q];
        if (Math.abs(apq) < 1e-300) continue;
        const theta = (m[q * n + q] - m[p * n + p]) / (2 * apq);
        const t = Math.sign(theta || 1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        for (let k = 0; k < n; k++) {
          const akp = m[k * n + p];
          const akq = m[k * n + q];
          m[k * n + p] = c * akp - s * akq;
          m[k * n + q] = s * akp + c * akq;
        }
        for (let k = 0; k < n; k++) {
          const apk = m[p * n + k];
          const aqk = m[q * n + k];
          m[p * n + k] = c * apk - s * aqk;
          m[q * n + k] = s * apk + c * aqk;
        }
        for (let k = 0; k < n; k++) {
          const vkp = v[k * n + p];
          const vkq = v[k * n + q];
          v[k * n + p] = c * vkp - s * vkq;
          v[k * n + q] = s * vkp + c * vkq;
        }
      }
    }
  }
  const order = Array.from({ length: n }, (_, i) => i).sort((i, j) => m[j * n + j] - m[i * n + i] || i - j);
  const values = Float64Array.from(order.map((i) => m[i * n + i]));
  const vectors = order.map((i) => Float64Array.from({ length: n }, (_, k) => v[k * n + i]));
  return { values, vectors };
}

/**
 * Eigenvalues of the centred Gram matrix at or below this count as zero: 1e-12 of the
 * largest, and never less than 1e-20 of the mean squared norm of the vectors themselves,
 * so that copies of one spectrum (whose centred values are rounding noise) give no component.
 */
export function rankFloor(largest: number, vectors: Float64Array[]): number {
  let energy = 0;
  for (const v of vectors) for (let j = 0; j < v.length; j++) energy += v[j] * v[j];
  return Math.max(largest * 1e-12, (energy / Math.max(1, vectors.length)) * 1e-20);
}

/** PCA model of the reference vectors (all of one length) with K components. */
export function buildDistanceModel(vectors: Float64Array[], components: number): DistanceModel {
  const n = vectors.length;
  if (n < 3) throw new RangeError('A distance model needs at least 3 references.');
  const p = vectors[0].length;
  const mean = new Float64Array(p);
  for (const v of vectors) for (let j = 0; j < p; j++) mean[j] += v[j] / n;
  const centred = vectors.map((v) => v.map((a, j) => a - mean[j]));
  const gram = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    for (let k = i; k < n; k++) {
      let s = 0;
      const a = centred[i];
      const b = centred[k];
      for (let j = 0; j < p; j++) s += a[j] * b[j];
      gram[i * n + k] = s;
      gram[k * n + i] = s;
    }
  }
  const { values, vectors: u } = symmetricEigen(gram, n);
  const maxK = Math.min(components, n - 1);
  const loadings: Float64Array[] = [];
  const variances: number[] = [];
  const floor = rankFloor(values[0], vectors);
  for (let k = 0; k < maxK; k++) {
    const lambda = values[k];
    if (!(lambda > floor)) break;
    const load = new Float64Array(p);
    for (let i = 0; i < n; i++) {
      const w = u[k][i] / Math.sqrt(lambda);
      const c = centred[i];
      for (let j = 0; j < p; j++) load[j] += w * c[j];
    }
    loadings.push(load);
    variances.push(lambda / (n - 1));
  }
  return { mean, loadings, variances: Float64Array.from(variances), references: n };
}

/** Scores of a vector on the model's components. */
export function scoresOf(model: DistanceModel, vector: Float64Array): Float64Array {
  return Float64Array.from(model.loadings, (load) => {
    let s = 0;
    for (let j = 0; j < load.length; j++) s += (vector[j] - model.mean[j]) * load[j];
    return s;
  });
}

/** Mahalanobis distance on the scores, in RMS standard deviations per component. */
export function mahalanobisDistance(model: DistanceModel, vector: Float64Array): number {
  const t = scoresOf(model, vector);
  let d2 = 0;
  for (let k = 0; k < t.length; k++) d2 += (t[k] * t[k]) / model.variances[k];
  return Math.sqrt(d2 / Math.max(1, t.length));
}
