// The route tree read from src/routes: pages, their form actions and the methods of +server.ts endpoints.
import fs from 'node:fs';
import path from 'node:path';

export interface RouteFile {
	route: string;
	page: boolean;
	actions: string[];
	methods: string[];
}

/** Every route in src/routes: pages, their form actions and the methods of +server.ts endpoints. */
export function routeTree(root = 'src/routes'): RouteFile[] {
	const out = new Map<string, RouteFile>();
	const walk = (dir: string) => {
		for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
			const full = path.join(dir, e.name);
			if (e.isDirectory()) {
				walk(full);
				continue;
			}
			const route =
				'/' +
				path
					.relative(root, dir)
					.split(path.sep)
					.filter((s) => s && !/^\(.*\)$/.test(s))
					.join('/');
			const r = out.get(route) ?? { route, page: false, actions: [], methods: [] };
			const src = fs.readFileSync(full, 'utf8');
			if (e.name === '+page.svelte') r.page = true;
			if (e.name === '+page.server.ts') {
				const block = src.match(/export const actions[^=]*=\s*\{([\s\S]*?)\n\};/);
				if (block) r.actions.push(...[...block[1].matchAll(/^\t(\w+):/gm)].map((m) => m[1]));
			}
			if (e.name === '+server.ts') r.methods.push(...[...src.matchAll(/export const (GET|POST|PUT|PATCH|DELETE)\b/g)].map((m) => m[1]));
			if (/^\+(page|server)/.test(e.name)) out.set(route, r);
		}
	};
	walk(root);
	return [...out.values()].sort((a, b) => a.route.localeCompare(b.route));
}
