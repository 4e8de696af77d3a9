import { fail, redirect } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { setError, type SuperValidated } from 'sveltekit-superforms';
import { previewKey } from '$lib/schemas/readings';
import type { Actor } from '../actor';
import { clientAddress } from '../auth/client-address';
import type { RequestEvent } from '@sveltejs/kit';
import { withShop } from '../db/tenant';
import type { Member } from '../guard';
import { machineFromParam } from '../machines/load';
import type { MachineRecord } from '../offsets/machine-state';
import { ReadingInputError } from './input';

/**
 * The reading pages' actions (touch off a tool, a part top, re-establish the reference) after
 * their guard: every one validates its form, works in the machine of the URL inside the
 * member's shop transaction, and answers a refusal on the form.
 */

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

/**
 * The "work it out" action: the preview of exactly these inputs, with the key the page
 * compares before it offers Save (previewKey), or the refusal on the form.
 */
export async function previewAction<T extends Record<string, unknown>, P>(
	event: RequestEvent,
	member: Member,
	form: SuperValidated<T>,
	compute: (trx: Knex.Transaction, machine: MachineRecord) => Promise<P>
) {
	if (!form.valid) return refuse(form, null);
	try {
		const preview = await withShop(member.shop, async (trx) =>
			compute(trx, await machineFromParam(trx, event.params.machine))
		);
		return { form, preview, previewKey: previewKey(form.data) };
	} catch (e) {
		return refuse(form, e);
	}
}

/** The save action: records in one shop transaction, then 303 to `to(saved)`; or the refusal. */
export async function saveAction<T extends Record<string, unknown>, R>(
	event: RequestEvent,
	member: Member,
	form: SuperValidated<T>,
	save: (trx: Knex.Transaction, machine: MachineRecord, actor: Actor) => Promise<R>,
	to: (saved: R) => string
) {
	if (!form.valid) return refuse(form, null);
	let saved: R;
	try {
		saved = await withShop(member.shop, async (trx) =>
			save(trx, await machineFromParam(trx, event.params.machine), actorOf(event, member.user))
		);
	} catch (e) {
		return refuse(form, e);
	}
	redirect(303, to(saved));
}
