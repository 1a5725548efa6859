export { Xoshiro128 } from './rng.js';
export { blockLength, movingBlockIndices, replicationIndices } from './blocks.js';
