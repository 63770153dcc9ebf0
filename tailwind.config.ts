// Tailwind theme: Momentry's own palette ("fjord" blues, "lichen" greens, "amber" cautions, "sand" edge zones) and Source Sans 3.
import type { Config } from 'tailwindcss';

export default {
	content: ['./src/**/*.{html,svelte,ts}'],
	darkMode: 'class',
	theme: {
		extend: {
			fontFamily: {
				sans: ['"Source Sans 3"', 'system-ui', 'sans-serif']
			},
			colors: {
				// Neutral ink/paper scale used for text and surfaces.
				ink: {
					50: '#f5f6f7',
					100: '#e8eaed',
					200: '#cfd3d9',
					300: '#a9b0ba',
					400: '#7b8592',
					500: '#5b6472',
					600: '#464e5a',
					700: '#353b45',
					800: '#23282f',
					900: '#161a1f',
					950: '#0d1013'
				},
				// Primary action colour.
				fjord: {
					50: '#eef5fa',
					100: '#d6e7f2',
					200: '#adcfe5',
					300: '#7bb0d2',
					400: '#4a8dbb',
					500: '#2f72a0',
					600: '#245b83',
					700: '#1e4a6a',
					800: '#1a3d57',
					900: '#142f43'
				},
				// Positive states (approved, healthy).
				lichen: {
					50: '#f1f7ef',
					100: '#deedd9',
					300: '#9ccb8d',
					500: '#4f8f3d',
					700: '#35632a',
					900: '#1f3a19'
				},
				// Cautions and warnings.
				amber: {
					50: '#fdf6e8',
					100: '#faeac6',
					300: '#efc063',
					500: '#c98a12',
					700: '#8a5c08',
					900: '#4d3305'
				},
				// Edge zones of plots (where results are not reliable): a quiet warm grey, apart from the amber of cautions.
				// 200 fills the band, 500 hatches it; src/lib/components/review/palette.ts writes the two out for exported SVGs.
				sand: {
					50: '#f8f5ef',
					100: '#eee7da',
					200: '#ddd0b8',
					300: '#c6b392',
					500: '#8f7a55',
					700: '#5e4f36'
				},
				// Errors and destructive actions.
				brick: {
					50: '#fcefec',
					100: '#f7d8d1',
					300: '#e69a8a',
					500: '#c2462c',
					700: '#8c2f1c',
					900: '#4f1a0f'
				}
			}
		}
	},
	plugins: []
} satisfies Config;
