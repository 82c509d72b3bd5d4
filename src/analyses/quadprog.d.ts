/** Types of the quadprog package (Goldfarb–Idnani dual method, a port of R's quadprog), which ships none. 1-based arrays, as in its Fortran original. */
declare module 'quadprog' {
  export interface QpResult {
    solution?: number[];
    Lagrangian?: number[];
    value?: number[];
    message: string;
  }
  /** min −dᵀb + ½ bᵀDb subject to Aᵀb ≥ b0, the first `meq` constraints as equalities; column j of A is constraint j. */
  export function solveQP(Dmat: number[][], dvec: number[], Amat: number[][], bvec: number[], meq?: number): QpResult;
}
