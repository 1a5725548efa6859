export { backtest, backtestPanel, backtestWindows, summarizeBacktest, incrementalApplies, rollsSums, engineName, backtestHeader } from './run.js';
export type { BacktestOptions, BacktestEngine, CancelToken, FitFunction, WindowRecord } from './run.js';
export { windowSchedule, slicePanel, windowLags, windowsPerChunk, windowChunks } from './windows.js';
export type { WindowBounds } from './windows.js';
export { heldOutErrors } from './oos.js';
export { CrossMoments, longRunCovarianceFromSums } from './crossMoments.js';
export { fitLinearWindow } from './linearWindow.js';
export type { LinearKind, LinearWindowConfig, LinearWindowFit, WindowParam } from './linearWindow.js';
