import { Loading } from '@/components/States';

/** Shown at once while the series page reads its record, analysis and charts. */
export default function SeriesLoading() {
  return <Loading label="Reading the series and its latest analysis…" />;
}
