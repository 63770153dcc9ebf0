// Domain errors: what services throw when a request cannot be done. No HTTP here; the edge (http/edge.ts) maps
// each kind to a status code, a page or a form failure, and the worker and the command line print the message.

/** Field name → what is wrong with it, in words a person can act on; `form` for the request as a whole. */
export type FieldErrors = Record<string, string>;

export type DomainErrorKind =
	| 'invalid' // the input is wrong: fix the named fields
	| 'unprocessable' // the input is well formed but cannot be used (e.g. a file's content)
	| 'unauthenticated' // nobody is signed in
	| 'forbidden' // signed in, but this role may not do it
	| 'not-found' // no such record, or one the person may not know exists
	| 'conflict' // the record's state forbids it now (locked, already done, a duplicate)
	| 'gone' // a link or record that no longer exists
	| 'too-large' // a body over a stated limit
	| 'unsupported' // a body of a kind we do not read (content type)
	| 'rate-limited' // too many attempts: wait
	| 'upstream' // a service we depend on (mail) refused
	| 'unavailable'; // a service we depend on is down: nothing was saved

export class DomainError extends Error {
	constructor(
		readonly kind: DomainErrorKind,
		message: string,
		/** Per-field messages for forms; empty for errors about the request as a whole. */
		readonly errors: FieldErrors = {}
	) {
		super(message);
		this.name = 'DomainError';
	}
}

/** A refused form: one message per field (or `form`), shown beside the fields. */
export class FormProblem extends DomainError {
	constructor(errors: FieldErrors, kind: DomainErrorKind = 'invalid') {
		super(kind, Object.values(errors).join(' '), errors);
		this.name = 'FormProblem';
	}
}

export const notFound = (message = 'Not found') => new DomainError('not-found', message);
export const forbidden = (message = 'You do not have permission to do this.') => new DomainError('forbidden', message);
export const conflict = (message: string) => new DomainError('conflict', message);
export const unauthenticated = (message = 'Sign in first.') => new DomainError('unauthenticated', message);

export const isDomainError = (e: unknown): e is DomainError => e instanceof DomainError;
