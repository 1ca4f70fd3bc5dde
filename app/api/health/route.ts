import { NextResponse } from 'next/server';
import { fetchHealth } from '@/lib/runtime/health';

export const dynamic = 'force-dynamic';

/** Public on purpose: load balancers and uptime checks call it without a session. */
export async function GET() {
  const report = await fetchHealth();
  return NextResponse.json(report, { status: report.ok ? 200 : 503, headers: { 'Cache-Control': 'no-store' } });
}
