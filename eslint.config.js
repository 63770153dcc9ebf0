// ESLint (flat config) as SvelteKit's templates set it up: JavaScript, typescript-eslint and Svelte recommended rules,
// with eslint-config-prettier turning off the rules that only concern layout (prettier owns layout: `npm run format`).
import prettier from 'eslint-config-prettier';
import js from '@eslint/js';
import { defineConfig } from 'eslint/config';
import svelte from 'eslint-plugin-svelte';
import globals from 'globals';
import ts from 'typescript-eslint';
import svelteConfig from './svelte.config.js';

export default defineConfig(
	{
		ignores: ['build/', '.svelte-kit/', 'node_modules/', '.test-artifacts/', '.data/', 'test-results/', 'playwright-report/']
	},
	js.configs.recommended,
	...ts.configs.recommended,
	...svelte.configs.recommended,
	prettier,
	...svelte.configs.prettier,
	{
		languageOptions: {
			globals: { ...globals.browser, ...globals.node }
		},
		rules: {
			// TypeScript itself reports undefined names; typescript-eslint advises turning this rule off for TypeScript.
			'no-undef': 'off',
			// A leading underscore marks a name kept on purpose, e.g. `const { dropped: _, ...rest } = row`.
			'@typescript-eslint/no-unused-vars': [
				'error',
				{ argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrorsIgnorePattern: '^_', destructuredArrayIgnorePattern: '^_' }
			],
			// The app is served at the root (no kit.paths.base), so a plain href is already right; goto and the shallow-routing calls stay checked.
			'svelte/no-navigation-without-resolve': ['error', { ignoreLinks: true }],
			// It also flags Maps, Sets and URLSearchParams built and dropped inside a function or $derived (eslint-plugin-svelte issue 1271), which is every use we have.
			'svelte/prefer-svelte-reactivity': 'off'
		}
	},
	{
		files: ['**/*.svelte', '**/*.svelte.ts', '**/*.svelte.js'],
		languageOptions: {
			parserOptions: {
				projectService: true,
				extraFileExtensions: ['.svelte'],
				parser: ts.parser,
				svelteConfig
			}
		}
	}
);
