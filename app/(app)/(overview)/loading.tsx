import { Loading } from '@/components/States';

/**
 * Shown at once while every series' state, freshness and trends are read. It sits in the (overview) group so it wraps
 * the overview only, not the pages with ids below (app), which must answer 404 before streaming.
 */
export default function OverviewLoading() {
  return <Loading label="Reading every series' state…" />;
}
