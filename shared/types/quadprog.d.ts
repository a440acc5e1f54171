/**
 * Types for the npm package `quadprog` (1.6.1), which ships none: the dual method of
 * Goldfarb and Idnani (1982, 1983) for min 1/2 b'Db - d'b subject to A'b >= b0, the first
 * `meq` constraints as equalities. Every array is 1-indexed (index 0 unused), as in the
 * Fortran original; Dmat and dvec are overwritten. Used by synthWeights.ts.
 */
declare module 'quadprog' {
  export interface QpResult {
    solution: number[]
    Lagrangian: number[]
    value: number[]
    unconstrained_solution: number[]
    iterations: number[]
    iact: number[]
    /** Empty on success, else why the call failed. */
    message: string
  }
  export function solveQP(Dmat: number[][], dvec: number[], Amat: number[][], bvec: number[], meq?: number, factorized?: number[]): QpResult
  const quadprog: { solveQP: typeof solveQP }
  export default quadprog
}
