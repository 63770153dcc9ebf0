// Per-request context for code that Auth.js calls without the request (its events): the client's address.
import { AsyncLocalStorage } from 'node:async_hooks';

const store = new AsyncLocalStorage<{ ip: string | null }>();

export function withRequestContext<T>(ip: string | null, fn: () => T): T {
	return store.run({ ip }, fn);
}

export function currentClientAddress(): string | null {
	return store.getStore()?.ip ?? null;
}
