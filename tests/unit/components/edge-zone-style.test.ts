// The edge-zone bands use the `sand` scale of the Tailwind theme, written out as colours for exported SVG files.
import { describe, expect, it } from 'vitest';
import config from '../../../tailwind.config';
import { EDGE_ZONE_STYLE } from '../../../src/lib/components/review/palette';

describe('edge-zone style', () => {
	it('fills with sand-200 and hatches with sand-500, half-transparent so the curves stay readable', () => {
		const sand = (config.theme.extend.colors as Record<string, Record<number, string>>).sand;
		expect(EDGE_ZONE_STYLE.fill).toBe(sand[200]);
		expect(EDGE_ZONE_STYLE.hatch).toBe(sand[500]);
		expect(EDGE_ZONE_STYLE.fillOpacity).toBeLessThan(1);
	});
});
