import { formerPath } from '@/lib/http/former-path';
import * as actions from '../actions/route';

/** Former address of /api/alerts/{id}/actions (until the next release). */
export const POST = formerPath(actions.POST, (pathname) => pathname.replace(/\/transitions$/, '/actions'));
