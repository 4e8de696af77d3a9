import { programComponents } from '$lib/server/components/load-program';
import { json } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { setupFromParam, setupLoadProgram } from '$lib/server/setups/load';
import type { RequestHandler } from './$types';

/**
 * One setup: machine, reference, fixtures with work offsets and the engine's clearance planes,
 * tools with length offsets, ops, photos (as URLs), state history, and whether a load program
 * can be written (with the engine's reasons when not).
 */
export const GET: RequestHandler = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const { setup, components } = await withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		return { setup, components: await programComponents(trx, setup.machine) };
	});
	const program = setupLoadProgram(setup, undefined, components);
	const base = `/shops/${shop.slug}/setups/${setup.id}`;
	return json({
		setup: {
			...setup,
			photos: setup.photos.map((p) => ({ ...p, url: `${base}/photos?id=${p.id}` })),
			loadProgram: program.ok
				? { ok: true, url: `${base}/load-program`, filename: program.filename }
				: { ok: false, reasons: program.reasons }
		}
	});
};
