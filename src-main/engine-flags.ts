/**
 * V8 settings for the numerical kernels, applied by each entry point (the CLI, the worker)
 * before a kernel is compiled. `--no-liftoff`: the kernel layer's WebAssembly module
 * (shared/linalg/gramKernel.ts) is compiled by the optimising compiler at once, not first by
 * the baseline compiler: a large product that starts in baseline code stays there for the
 * whole call (a running call cannot move up a tier), and runs 3-4 times slower (a daily fit's
 * first Gram product of 103 series over 10,000 days: about 50 ms instead of 13 ms). The module
 * is a few hundred bytes, so compiling it optimised costs well under a millisecond. The
 * numbers do not change: WebAssembly arithmetic is exact IEEE 754 in every tier.
 */
import { setFlagsFromString } from 'node:v8';

setFlagsFromString('--no-liftoff');
