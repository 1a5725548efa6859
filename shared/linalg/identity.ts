/**
 * The kernel layer's identity, recorded with every run (RunRecord.compute.kernels) so that
 * replay knows whether a recomputation should match bit for bit.
 *
 * `revision` changes whenever a change to shared/linalg (or to how the estimators call it)
 * can move the last bits of a result; the route of the products ('wasm-simd128' or 'js')
 * is information only, both routes give the same bits (gramKernel.ts). Runs recorded
 * before kernels were recorded carry none and are revision 'linalg-1' (the layer with the
 * private back-test copies of Cholesky, QR and elimination).
 *
 * Replay (src-main/runs/replay.ts): the same software version and the same revision must
 * reproduce every stored number bit for bit; across versions or revisions, numbers must
 * agree to the stated tolerance (REPLAY_TOLERANCE) and the largest difference is reported.
 */
import { gramRoute } from './gramKernel.js';

export const KERNEL_REVISION = 'linalg-3';
/** The revision of runs recorded without a kernel identity. */
export const KERNEL_REVISION_UNRECORDED = 'linalg-1';

export interface KernelIdentity {
  revision: string;
  products: 'wasm-simd128' | 'js';
}

export function kernelIdentity(): KernelIdentity {
  return { revision: KERNEL_REVISION, products: gramRoute() };
}

/**
 * Agreement across versions: |stored - recomputed| <= relative * max(|stored|, |recomputed|)
 * + absolute. 1e-8 relative is about where a change in the order of floating-point
 * operations in the factorisations can move a well-conditioned estimate, its standard
 * error or a p-value (the references in the tests hold the engine to 1e-8 against R gmm);
 * the absolute part covers values that are zero up to rounding (a pricing error of 1e-17).
 */
export const REPLAY_TOLERANCE = { relative: 1e-8, absolute: 1e-12 } as const;
