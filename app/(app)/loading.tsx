import { Loading } from '@/components/States';

/** Shown at once while a signed-in page reads its data (the overview, a series, a site, an alert). */
export default function PageLoading() {
  return <Loading label="Reading the data…" />;
}
