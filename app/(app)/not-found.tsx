import { NotFoundNotice } from '@/components/PageStates';

/** An unknown series, site, alert or user inside the app (`notFound()`, HTTP 404), shown within the app's frame. */
export default function NotFound() {
  return <NotFoundNotice />;
}
