export * from './types.js';
export * from './palette.js';
export { num } from './common.js';
export * from './pricing-errors.js';
export * from './predicted-realized.js';
export * from './volatility-bound.js';
export * from './price-history.js';
export * from './backtest.js';
export * from './compare.js';
