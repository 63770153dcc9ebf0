// PostCSS pipeline: Tailwind (reads tailwind.config.ts) then vendor prefixes.
export default {
	plugins: {
		tailwindcss: { config: './tailwind.config.ts' },
		autoprefixer: {}
	}
};
