import type { ReactNode } from 'react';
import { requireRole } from '@/lib/auth/guard';
import { assertAlertExists } from '@/lib/alerts/queries';
import { foundOr404 } from '@/lib/http/page';
import { idParam } from '@/lib/http/params';

/**
 * Decides "no such alert" before the loading state below starts streaming the page: once streaming has begun the
 * status line is sent, and an unknown id could no longer answer HTTP 404.
 */
export default async function AlertLayout({ children, params }: { children: ReactNode; params: Promise<{ id: string }> }) {
  await requireRole('viewer');
  const { id } = await params;
  await foundOr404(async () => assertAlertExists(idParam(id, 'Alert')));
  return children;
}
