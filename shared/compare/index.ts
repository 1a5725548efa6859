export { alignPanels, assembleCompare, estimatorIdentity, modelOutcome, outcomeFor, outcomeRow, outcomeError, bootstrapChunk, bootstrapMembers, bootstrapSettings, compareModels, BLOCK_RULE, HJ_TEST_METHOD } from './compare.js';
export type { CompareDeps, ModelOutcome } from './compare.js';
export { describeFailures, hjBootstrapDraws, hjDifferenceTest, mergeDraws, modelHjSquared, resamplePanel } from './bootstrap.js';
export type { BootstrapFailure, HjBootstrapChunk, HjBootstrapDeps, HjBootstrapDraws } from './bootstrap.js';
export { linearHjSquared, linearHjApplies, modelSeries } from './hjSquared.js';
