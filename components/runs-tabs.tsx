import { SectionTabs } from './section-tabs';

/** Pages of the Runs section; every role reads runs, specs and the deep checks on runs it can read. */
export const RUNS_TABS = [
  { href: '/runs', label: 'Runs' },
  { href: '/specs', label: 'Model specs' },
  { href: '/jobs', label: 'Deep checks' },
] as const;

/** The Runs section's page links (the bottom bar keeps its four destinations; these live inside Runs). */
export function RunsTabs() {
  return <SectionTabs tabs={RUNS_TABS} label="Runs pages" />;
}
