// Consent forms' Markdown to HTML, safely: raw HTML in the source is shown as text, never emitted as tags.
import MarkdownIt from 'markdown-it';

// html: false escapes every tag written in the source; linkify off and the default link validator keep javascript: out
const md = new MarkdownIt({ html: false, linkify: false, typographer: false });

export function renderMarkdown(source: string): string {
	return md.render(source);
}
