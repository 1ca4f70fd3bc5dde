import { NotFoundNotice } from '@/components/PageStates';

export const metadata = { title: 'Not found' };

/** Addresses that match no route (Next answers them with HTTP 404). */
export default function NotFound() {
  return (
    <main className="px-4">
      <NotFoundNotice />
    </main>
  );
}
