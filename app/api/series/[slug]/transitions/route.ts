import { NextResponse } from 'next/server';
import { formerPath } from '@/lib/http/former-path';
import * as marks from '../marks/route';

/** Former address of /api/series/{slug}/marks (until the next release); the list keeps its former key. */
const successor = (pathname: string) => pathname.replace(/\/transitions$/, '/marks');

export const GET = formerPath<Parameters<typeof marks.GET>[1]>(async (request, context) => {
  const response = await marks.GET(request, context);
  if (!response.ok) return response;
  const { marks: list } = (await response.json()) as { marks: unknown[] };
  return NextResponse.json({ transitions: list });
}, successor);

export const POST = formerPath(marks.POST, successor);
