// Consent form Markdown: raw HTML in the source comes out as text, never as a tag; ethics expiry states.
import { describe, expect, it } from 'vitest';
import { renderMarkdown } from '../../../src/lib/server/consent/markdown';
import { ethicsState } from '../../../src/lib/server/studies/records';

describe('renderMarkdown', () => {
	it('renders ordinary Markdown', () => {
		expect(renderMarkdown('# Title\n\n**bold** and a list:\n\n- one')).toContain('<h1>Title</h1>');
		expect(renderMarkdown('**bold**')).toContain('<strong>bold</strong>');
	});
	it('shows a <script> as text, not as a tag', () => {
		const html = renderMarkdown('Hello <script>alert("x")</script>\n\n<script>\nalert(1)\n</script>');
		expect(html).not.toMatch(/<script/i);
		expect(html).toContain('&lt;script&gt;');
	});
	it('escapes inline event handlers and refuses javascript: links', () => {
		const html = renderMarkdown('<img src=x onerror="alert(1)">\n\n[click](javascript:alert(1))');
		expect(html).not.toMatch(/<img/i);
		expect(html).not.toMatch(/href="javascript:/i);
	});
});

describe('ethicsState', () => {
	it('warns from 30 days before expiry and says expired after', () => {
		expect(ethicsState(null, '2026-12-02').state).toBe('none');
		expect(ethicsState('2027-01-02', '2026-12-02')).toEqual({ state: 'valid', daysLeft: 31 });
		expect(ethicsState('2027-01-01', '2026-12-02')).toEqual({ state: 'expiring', daysLeft: 30 });
		expect(ethicsState('2026-12-02', '2026-12-02')).toEqual({ state: 'expiring', daysLeft: 0 });
		expect(ethicsState('2026-12-01', '2026-12-02')).toEqual({ state: 'expired', daysLeft: -1 });
	});
});
