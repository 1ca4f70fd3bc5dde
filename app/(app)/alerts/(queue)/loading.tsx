import { Loading } from '@/components/States';

/**
 * Shown at once while the queue is read. It sits in the (queue) group so it wraps the list only: around an alert's
 * own page it would start streaming before an unknown id could answer 404.
 */
export default function AlertQueueLoading() {
  return <Loading label="Reading the alert queues…" />;
}
