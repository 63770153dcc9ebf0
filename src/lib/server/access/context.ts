// The one request context: who asks, from where, on which path. Services take (actor, ctx, input); the edge builds
// ctx from the request, the worker and the command line use systemContext().
import { config } from '../config';

export interface RequestContext {
	/** The client's address, kept in the audit log; null for the worker and the command line. */
	ipAddress: string | null;
	/** The origin links in e-mails start with (ORIGIN when configured wins, see linkBase). */
	origin: string;
	/** Method and path of the request, for the audit log's denials. */
	method: string;
	path: string;
}

/** The context of work that no request started (the worker, the command line, the seed). */
export function systemContext(what = 'system'): RequestContext {
	return { ipAddress: null, origin: config().ORIGIN ?? 'http://127.0.0.1', method: what, path: '' };
}

/** Where links in e-mails point: the configured ORIGIN, else the origin the request came in on. */
export function linkBase(ctx: RequestContext): string {
	return (config().ORIGIN ?? ctx.origin).replace(/\/+$/, '');
}
