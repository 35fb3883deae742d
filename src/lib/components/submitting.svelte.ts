// Form submission state for the set-up forms: a busy flag, and after a refused submission the
// first field marked invalid gets the focus (and scrolls into view) so the fix starts there.
import type { SubmitFunction } from '@sveltejs/kit';
import { tick } from 'svelte';

export class Submitting {
	busy = $state(false);

	/** For `use:enhance={s.submit}`; keeps what was typed (no reset) whatever the answer. */
	submit: SubmitFunction = ({ formElement }) => {
		this.busy = true;
		return async ({ update, result }) => {
			await update({ reset: false });
			this.busy = false;
			if (result.type === 'failure') {
				await tick();
				formElement.querySelector<HTMLElement>('[aria-invalid="true"]')?.focus();
			}
		};
	};
}
