/** Which screen is showing; the screens' names are the app's own. */
import { defineStore } from 'pinia';

export const SCREENS = [
  { id: 'histories', label: 'Histories', hint: 'import, coverage, price vs total return' },
  { id: 'setup', label: 'Model set-up', hint: 'test assets, factors, estimator, sample' },
  { id: 'fit', label: 'Fit results', hint: 'parameters, pricing errors, tests' },
  { id: 'backtest', label: 'Back-test', hint: 'rolling windows, out of sample' },
  { id: 'compare', label: 'Comparison', hint: 'models side by side' },
  { id: 'values', label: 'Present values', hint: 'dividend-price decomposition, drift split' },
  { id: 'runs', label: 'Run history', hint: 'past runs: open, replay, export, compare' },
] as const;

export type ScreenId = (typeof SCREENS)[number]['id'];

export const useUiStore = defineStore('ui', {
  state: () => ({ screen: 'histories' as ScreenId, notice: '' }),
  actions: {
    go(screen: ScreenId): void {
      this.screen = screen;
    },
    notify(text: string): void {
      this.notice = text;
    },
  },
});
