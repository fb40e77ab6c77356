/** Public API of the estimation library (pure TypeScript on ml-matrix and stdlib special functions). */
export * from './errors';
export * from './distributions';
export * from './hac';
export { wasmKernelAvailable } from './syrk-wasm';
export * from './moments';
export * from './validate';
export * from './ols';
export * from './sdf-gmm';
export * from './premia';
export * from './robust';
export * from './wald';
export * from './drop-test';
export * from './spanning';
export * from './thin-beta';
export * from './grs';
export * from './fama-macbeth';
export * from './hj-distance';
export * from './verdict';
export * from './ledger';
export * from './ledger-bootstrap';
// the dense kernels (cholesky, spdInverse, …) return null on a singular matrix and stay internal
export { fromNested, toNested } from './linalg';
// Deep checks (issue 6)
export * from './bootstrap';
export * from './random';
export * from './subset-sweep';
export * from './rolling';
// Choosing among models
export * from './sharpe';
export * from './multiple-testing';
export * from './holdout';
