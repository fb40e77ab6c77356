/**
 * Small dense linear algebra on row-major Float64Array matrices (K×K, N×N with N ≲ a few
 * hundred). Symmetric positive-definite systems are solved by Cholesky; a failed factorisation is
 * reported as `null` (the callers turn it into a typed result), never as NaN. ml-matrix supplies
 * the symmetric eigendecomposition (rank-r pseudo-inverse) and Householder QR (least squares).
 */
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';

/** Relative pivot tolerance below which a Cholesky factorisation is declared singular. */
export const SINGULAR_TOL = 1e-13;

/**
 * Cholesky factor L (lower, row-major n×n) of a symmetric positive-definite A, or null when a
 * pivot is not positive relative to the largest diagonal element (singular or indefinite).
 */
export function cholesky(A: Float64Array, n: number, tol = SINGULAR_TOL): Float64Array | null {
  const L = new Float64Array(n * n);
  let maxDiag = 0;
  for (let i = 0; i < n; i++) maxDiag = Math.max(maxDiag, Math.abs(A[i * n + i]));
  if (!(maxDiag > 0) || !Number.isFinite(maxDiag)) return null;
  for (let j = 0; j < n; j++) {
    let d = A[j * n + j];
    const rowJ = j * n;
    for (let k = 0; k < j; k++) d -= L[rowJ + k] * L[rowJ + k];
    if (!(d > tol * maxDiag)) return null;
    const ljj = Math.sqrt(d);
    L[rowJ + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      const rowI = i * n;
      let s = A[rowI + j];
      for (let k = 0; k < j; k++) s -= L[rowI + k] * L[rowJ + k];
      L[rowI + j] = s / ljj;
    }
  }
  return L;
}

/** Solve (L L') X = B for X (n×m, row-major), B left untouched. */
export function choleskySolve(L: Float64Array, n: number, B: Float64Array, m: number): Float64Array {
  const X = Float64Array.from(B);
  // forward: L Y = B
  for (let i = 0; i < n; i++) {
    const rowI = i * n;
    for (let k = 0; k < i; k++) {
      const l = L[rowI + k];
      if (l === 0) continue;
      for (let c = 0; c < m; c++) X[i * m + c] -= l * X[k * m + c];
    }
    const d = L[rowI + i];
    for (let c = 0; c < m; c++) X[i * m + c] /= d;
  }
  // backward: L' X = Y
  for (let i = n - 1; i >= 0; i--) {
    for (let k = i + 1; k < n; k++) {
      const l = L[k * n + i];
      if (l === 0) continue;
      for (let c = 0; c < m; c++) X[i * m + c] -= l * X[k * m + c];
    }
    const d = L[i * n + i];
    for (let c = 0; c < m; c++) X[i * m + c] /= d;
  }
  return X;
}

/** Inverse of a lower-triangular L (n×n), lower triangular, by forward substitution (n³/6). */
export function lowerTriangularInverse(L: Float64Array, n: number): Float64Array {
  const Li = new Float64Array(n * n);
  for (let j = 0; j < n; j++) {
    Li[j * n + j] = 1 / L[j * n + j];
    for (let i = j + 1; i < n; i++) {
      let s = 0;
      const rowI = i * n;
      for (let k = j; k < i; k++) s += L[rowI + k] * Li[k * n + j];
      Li[rowI + j] = -s / L[rowI + i];
    }
  }
  return Li;
}

/**
 * Inverse of an SPD matrix from its Cholesky factor: A⁻¹ = L⁻ᵀ L⁻¹, using the triangular
 * structure (n³/3 multiply-adds in all); exactly symmetric.
 */
export function choleskyInverse(L: Float64Array, n: number): Float64Array {
  const Li = lowerTriangularInverse(L, n);
  // transpose so that column i of L⁻¹ is a contiguous row
  const U = transpose(Li, n, n); // U = L⁻ᵀ (upper): row i holds L⁻¹[·, i]
  const X = new Float64Array(n * n);
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let j = i; j < n; j++) {
      const rj = j * n;
      let s = 0;
      for (let k = j; k < n; k++) s += U[ri + k] * U[rj + k];
      X[ri + j] = s;
      X[rj + i] = s;
    }
  }
  return X;
}

/** Inverse of an SPD matrix, or null when singular. */
export function spdInverse(A: Float64Array, n: number): Float64Array | null {
  const L = cholesky(A, n);
  return L ? choleskyInverse(L, n) : null;
}

/** Solve A X = B for SPD A (n×n) and B (n×m); null when A is singular. */
export function spdSolve(A: Float64Array, n: number, B: Float64Array, m: number): Float64Array | null {
  const L = cholesky(A, n);
  return L ? choleskySolve(L, n, B, m) : null;
}

export function identity(n: number): Float64Array {
  const I = new Float64Array(n * n);
  for (let i = 0; i < n; i++) I[i * n + i] = 1;
  return I;
}

export function symmetrise(A: Float64Array, n: number): void {
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const v = 0.5 * (A[i * n + j] + A[j * n + i]);
      A[i * n + j] = v;
      A[j * n + i] = v;
    }
}

/** C = A (r×k) · B (k×c). */
export function matMul(A: Float64Array, r: number, k: number, B: Float64Array, c: number): Float64Array {
  const C = new Float64Array(r * c);
  for (let i = 0; i < r; i++) {
    const rowC = i * c;
    for (let l = 0; l < k; l++) {
      const a = A[i * k + l];
      if (a === 0) continue;
      const rowB = l * c;
      for (let j = 0; j < c; j++) C[rowC + j] += a * B[rowB + j];
    }
  }
  return C;
}

/** C = A' (A is k×r, result r×c) · B (k×c). */
export function matTMul(A: Float64Array, k: number, r: number, B: Float64Array, c: number): Float64Array {
  const C = new Float64Array(r * c);
  for (let l = 0; l < k; l++) {
    const rowA = l * r;
    const rowB = l * c;
    for (let i = 0; i < r; i++) {
      const a = A[rowA + i];
      if (a === 0) continue;
      const rowC = i * c;
      for (let j = 0; j < c; j++) C[rowC + j] += a * B[rowB + j];
    }
  }
  return C;
}

/** y = A (r×c) x. */
export function matVec(A: Float64Array, r: number, c: number, x: ArrayLike<number>): Float64Array {
  const y = new Float64Array(r);
  for (let i = 0; i < r; i++) {
    let s = 0;
    const row = i * c;
    for (let j = 0; j < c; j++) s += A[row + j] * x[j];
    y[i] = s;
  }
  return y;
}

/** x' A y for A (n×n). */
export function quadForm(A: ArrayLike<number>, n: number, x: ArrayLike<number>, y: ArrayLike<number> = x): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const xi = x[i];
    if (xi === 0) continue;
    let r = 0;
    const row = i * n;
    for (let j = 0; j < n; j++) r += A[row + j] * y[j];
    s += xi * r;
  }
  return s;
}

export function transpose(A: Float64Array, r: number, c: number): Float64Array {
  const B = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) B[j * r + i] = A[i * c + j];
  return B;
}

/** Sub-matrix of rows `rows` and columns `cols` of A (·×c). */
export function subMatrix(A: Float64Array, c: number, rows: readonly number[], cols: readonly number[]): Float64Array {
  const B = new Float64Array(rows.length * cols.length);
  for (let i = 0; i < rows.length; i++)
    for (let j = 0; j < cols.length; j++) B[i * cols.length + j] = A[rows[i] * c + cols[j]];
  return B;
}

export function toNested(A: ArrayLike<number>, r: number, c: number): number[][] {
  const out: number[][] = [];
  for (let i = 0; i < r; i++) {
    const row = new Array<number>(c);
    for (let j = 0; j < c; j++) row[j] = A[i * c + j];
    out.push(row);
  }
  return out;
}

export function fromNested(rows: readonly (readonly number[])[], c?: number): Float64Array {
  const r = rows.length;
  const cols = c ?? (r > 0 ? rows[0].length : 0);
  const A = new Float64Array(r * cols);
  for (let i = 0; i < r; i++) for (let j = 0; j < cols; j++) A[i * cols + j] = rows[i][j];
  return A;
}

/**
 * Moore–Penrose inverse of a symmetric positive-semidefinite matrix keeping exactly its `rank`
 * largest eigenvalues (the others are treated as zero). Used for the first-stage J test, where
 * Var(α̂) has rank N − K by construction.
 */
export function pinvSymmetricRank(A: Float64Array, n: number, rank: number): Float64Array | null {
  if (rank <= 0) return new Float64Array(n * n);
  const evd = new EigenvalueDecomposition(new Matrix(toNested(A, n, n)), { assumeSymmetric: true });
  const values = evd.realEigenvalues;
  const V = evd.eigenvectorMatrix;
  const order = values.map((v, i) => [v, i] as const).sort((a, b) => b[0] - a[0]);
  const kept = order.slice(0, rank);
  if (!(kept[kept.length - 1][0] > 0)) return null;
  const P = new Float64Array(n * n);
  for (const [val, idx] of kept) {
    const inv = 1 / val;
    for (let i = 0; i < n; i++) {
      const vi = V.get(i, idx) * inv;
      for (let j = 0; j < n; j++) P[i * n + j] += vi * V.get(j, idx);
    }
  }
  symmetrise(P, n);
  return P;
}

export function allFinite(A: ArrayLike<number>): boolean {
  for (let i = 0; i < A.length; i++) if (!Number.isFinite(A[i])) return false;
  return true;
}
