import { fail } from '@sveltejs/kit';
import { setError, type SuperValidated } from 'sveltekit-superforms';
import { clientAddress } from '../auth/client-address';
import type { RequestEvent } from '@sveltejs/kit';
import { ReadingInputError, type Actor } from './record';

/**
 * A refused reading back onto its form: each issue on its own field (or on the whole form when
 * it names none of them), status 400, nothing written. `e` null: the form's own errors.
 */
export function refuse<T extends Record<string, unknown>>(form: SuperValidated<T>, e: unknown) {
	if (e !== null && !(e instanceof ReadingInputError)) throw e;
	for (const issue of e?.issues ?? []) {
		if (issue.field in form.data) setError(form, issue.field as never, issue.message);
		else setError(form, '', issue.message);
	}
	form.valid = false;
	return fail(400, { form });
}

/** The member recording a reading, for the reading row and the audit log. */
export function actorOf(event: RequestEvent, user: { id: number; email: string }): Actor {
	return { id: user.id, email: user.email, ip: clientAddress(event) };
}
