import { Loading } from '@/components/States';

/** Shown at once while the alert page reads its evidence, timeline and notes. */
export default function AlertLoading() {
  return <Loading label="Reading the alert and its evidence…" />;
}
