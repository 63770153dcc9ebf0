// SvelteKit configuration: Node adapter, Svelte 5 runes, TypeScript preprocessing.
import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		// `npm test` builds into a folder of its own, so parallel runs do not overwrite each other's build
		adapter: adapter({ out: process.env.MOMENTRY_BUILD_DIR ?? 'build', precompress: false }),
		outDir: process.env.MOMENTRY_KIT_DIR ?? '.svelte-kit'
	}
};

export default config;
