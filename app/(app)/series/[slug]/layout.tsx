import type { ReactNode } from 'react';
import { requireRole } from '@/lib/auth/guard';
import { foundOr404 } from '@/lib/http/page';
import { findSeriesBySlug } from '@/lib/series/registry';

/**
 * Decides "no such series" before the loading state below starts streaming the page: once streaming has begun
 * the status line is sent, and an unknown slug could no longer answer HTTP 404.
 */
export default async function SeriesLayout({ children, params }: { children: ReactNode; params: Promise<{ slug: string }> }) {
  await requireRole('viewer');
  const { slug } = await params;
  await foundOr404(() => findSeriesBySlug(slug));
  return children;
}
