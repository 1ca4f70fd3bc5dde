import { formerPath } from '@/lib/http/former-path';
import * as mark from '../../marks/[id]/route';

/** Former address of /api/marks/{id} (until the next release). */
export const DELETE = formerPath(mark.DELETE, (pathname) => pathname.replace(/^\/api\/transitions\//, '/api/marks/'));
