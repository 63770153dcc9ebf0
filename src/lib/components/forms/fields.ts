// Helpers for the fields of a form that posts to a page action and comes back with what was typed and a message per field.

/** A choice of a select: a value shown as it is, or a value and the words shown for it. */
export type Choice = string | readonly [value: string, words: string];

/** The props a FormField needs for one field: its id (`prefix-name`), name, what was typed and the field's message. */
export function fieldsOf(values: Record<string, unknown>, errors: Record<string, string>, prefix = 'field') {
	return (name: string) => {
		const value = values[name];
		return { id: `${prefix}-${name}`, name, value: typeof value === 'string' ? value : '', error: errors[name] };
	};
}

/** Above a form whose fields came back with messages. */
export const NOTHING_SAVED = 'Nothing was saved. Correct the fields marked below and save again.';
