/**
 * What Newton's method needs of a linear solver: value slots addressed by (row, col),
 * factor, solve. `SparseLu` is the product's; tests and the bench plug in a dense one
 * built on mathjs as the reference.
 */
export interface LinearSystem {
  readonly values: Float64Array;
  position(row: number, col: number): number;
  clear(): void;
  factor(): boolean;
  solve(b: Float64Array, x: Float64Array): void;
  /** Solves Aᵀ·x = b, for adjoint sensitivities; optional for reference solvers. */
  solveTransposed?(b: Float64Array, x: Float64Array): void;
}

/** Builds a linear system for an n×n pattern given as parallel row and column arrays. */
export type LinearSystemFactory = (n: number, rows: ArrayLike<number>, cols: ArrayLike<number>) => LinearSystem;
