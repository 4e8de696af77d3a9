import { programComponents } from '$lib/server/components/load-program';
import { CONTROL_STYLE_LABEL } from '$lib/offsets';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { setupFromParam, setupLoadProgram } from '$lib/server/setups/load';
import { latestSignoff } from '$lib/server/setups/signoff';
import type { PageServerLoad } from './$types';

/** The printable setup sheet: everything on one or two pages, as of the moment it is printed. */
export const load: PageServerLoad = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const setup = await setupFromParam(trx, event.params.setup);
		const program = setupLoadProgram(setup, undefined, await programComponents(trx, setup.machine));
		const paper = event.url.searchParams.get('paper');
		return {
			setup,
			controlStyle: CONTROL_STYLE_LABEL[setup.machine.controlStyle],
			loadProgram: program.ok
				? {
						ok: true as const,
						filename: program.filename,
						withheld: program.withheld.map((r) => r.label)
					}
				: { ok: false as const, reasons: program.reasons },
			signoff: await latestSignoff(trx, setup.id),
			printedAt: new Date().toISOString(),
			printedBy: user.name,
			paper: paper === 'a4' || paper === 'letter' ? paper : null
		};
	});
};
