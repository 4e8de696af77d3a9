import { untrack } from 'svelte';
import { get } from 'svelte/store';
import { superForm, type SuperValidated } from 'sveltekit-superforms';
import { previewKey } from '$lib/schemas/readings';

/**
 * The form of a reading page (tool, part top, reference): work it out first, then save. The
 * preview action answers with the preview and the key of the inputs it was worked out from;
 * Save is offered only while the form still holds exactly those inputs (`preview`), and
 * `stalePreview` says when they changed since. Call it while the page is set up.
 */
export function previewedForm<
	T extends Record<string, unknown>,
	M,
	In extends Record<string, unknown>,
	P
>(
	form: () => SuperValidated<T, M, In>,
	result: () => { preview?: P; previewKey?: string } | null | undefined
) {
	const sf = superForm<T, M, In>(untrack(form), { resetForm: false, invalidateAll: false });
	// A copy on every change: `bind:` writes into the store's own object, so the object itself
	// stays the same and only a new copy tells the key below that something changed.
	let values = $state.raw<Record<string, unknown>>({ ...get(sf.form) });
	$effect.pre(() =>
		sf.form.subscribe((v) => {
			values = { ...v };
		})
	);
	const current = $derived(previewKey(values));
	const answer = $derived(result());
	const preview = $derived(
		answer?.preview && answer.previewKey === current ? answer.preview : null
	);
	const stalePreview = $derived(!!answer?.preview && answer.previewKey !== current);
	return {
		...sf,
		get preview() {
			return preview;
		},
		get stalePreview() {
			return stalePreview;
		}
	};
}
