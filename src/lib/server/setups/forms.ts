import { fail } from '@sveltejs/kit';
import { setError, type SuperValidated } from 'sveltekit-superforms';
import type { SetupForm } from '$lib/schemas/setups';
import type { FieldIssue } from './write';

/** Puts each refusal on its field (paths like `fixtures[1].obstacleHeight`) and answers 400. */
export function failWithIssues(form: SuperValidated<SetupForm>, issues: FieldIssue[]) {
	for (const i of issues) {
		// Paths come from our own checks and name real fields of the form.
		setError(
			form,
			i.field as Parameters<typeof setError<SetupForm, 'name', unknown, SetupForm>>[1],
			i.message
		);
	}
	return fail(400, { form });
}
