/**
 * Small dense symmetric matrices for the location's least squares (n ≤ 4): Cholesky factorisation,
 * solve and inverse. Matrices are row-major Float64Array of n·n; inputs are never modified.
 * Source: Golub & Van Loan, "Matrix Computations", 4th ed. 2013, Algorithm 4.2.1 (Cholesky,
 * gaxpy form; from memory), common practice.
 */

/**
 * Lower-triangular L with A = L·Lᵀ, or null when A is not (numerically) positive definite: a pivot
 * at or below `relTol` × the largest diagonal element counts as zero (a parameter the data do not
 * constrain).
 * @throws RangeError when the array is not n·n.
 */
export function cholesky(a: Float64Array, n: number, relTol = 1e-13): Float64Array | null {
  if (a.length !== n * n) throw new RangeError(`cholesky: expected ${n}×${n} = ${n * n} values, got ${a.length}`);
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, Math.abs(a[i * n + i] as number));
  const l = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    let d = a[j * n + j] as number;
    for (let k = 0; k < j; k++) d -= (l[j * n + k] as number) ** 2;
    if (!(d > relTol * maxDiag)) return null;
    const ljj = Math.sqrt(d);
    l[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = a[i * n + j] as number;
      for (let k = 0; k < j; k++) s -= (l[i * n + k] as number) * (l[j * n + k] as number);
      l[i * n + j] = s / ljj;
    }
  }
  return l;
}

/** Solves L·Lᵀ·x = b with a factor from `cholesky` (forward then back substitution). */
export function choleskySolve(l: Float64Array, n: number, b: Float64Array): Float64Array {
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = b[i] as number;
    for (let k = 0; k < i; k++) s -= (l[i * n + k] as number) * (y[k] as number);
    y[i] = s / (l[i * n + i] as number);
  }
  const x = new Float64Array(n);
  for (let i = n - 1; i >= 0; i--) {
    let s = y[i] as number;
    for (let k = i + 1; k < n; k++) s -= (l[k * n + i] as number) * (x[k] as number);
    x[i] = s / (l[i * n + i] as number);
  }
  return x;
}

/** A⁻¹ from A's Cholesky factor (column by column solves), n·n row-major. */
export function choleskyInverse(l: Float64Array, n: number): Float64Array {
  const inv = new Float64Array(n * n);
  const e = new Float64Array(n);
  for (let j = 0; j < n; j++) {
    e.fill(0);
    e[j] = 1;
    const col = choleskySolve(l, n, e);
    for (let i = 0; i < n; i++) inv[i * n + j] = col[i] as number;
  }
  return inv;
}
