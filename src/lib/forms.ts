// Progressive enhancement shared by forms: a "saving" flag while the action runs, so the button can say so.
import type { SubmitFunction } from '@sveltejs/kit';

/** For `use:enhance`: calls `busy(true)` on submit and `busy(false)` once the page has updated. */
export function whileSaving(busy: (saving: boolean) => void): SubmitFunction {
	return () => {
		busy(true);
		return async ({ update }) => {
			await update();
			busy(false);
		};
	};
}
