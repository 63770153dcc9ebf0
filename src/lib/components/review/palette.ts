// Series colours and dash patterns of the review plots (one module, our own hues).
//
// The six hues were chosen by hand to differ in lightness as well as hue, and checked with a colour-vision
// simulation (tests/unit/components/review-palette.test.ts): simulated protanopia and deuteranopia (Viénot, Brettel &
// Mollon 1999 matrices) and tritanopia (Brettel-type projection), every pair at least 12 CIE76 ΔE apart in CIELAB
// under normal vision and each simulation. Series are told apart by dash pattern as well, so colour is never the
// only cue (the legend shows both).

export const SERIES_COLOURS = ['#1d4f91', '#e08a1e', '#2b9a7e', '#d48bc0', '#7d7d2a', '#b8323f'] as const;

/** stroke-dasharray per series: solid, dashed, dotted, dash-dot, long dash, dash-dot-dot. */
export const SERIES_DASHES = ['', '7 4', '2 3', '8 3 2 3', '12 4', '8 3 2 3 2 3'] as const;

export function seriesStyle(k: number): { colour: string; dash: string } {
	return { colour: SERIES_COLOURS[k % SERIES_COLOURS.length], dash: SERIES_DASHES[k % SERIES_DASHES.length] };
}

/**
 * The edge-zone band of every plot: hatched, over a light fill, in the `sand` scale of tailwind.config.ts (200 fills,
 * 500 hatches; tests/unit/components/edge-zone-style.test.ts keeps them equal). Written out as colours, not classes,
 * so that exported SVG and PNG files keep them. The hatching and the legend's words carry the meaning, not the hue.
 */
export const EDGE_ZONE_STYLE = { fill: '#ddd0b8', fillOpacity: 0.45, hatch: '#8f7a55', hatchOpacity: 0.8 } as const;
