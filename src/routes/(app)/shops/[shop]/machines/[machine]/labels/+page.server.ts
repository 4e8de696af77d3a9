import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { LABEL_SIZES, labelSizeOf, machineLabels } from '$lib/server/labels/sheet';
import { machineFromParam } from '$lib/server/machines/load';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	const size = labelSizeOf(event.url.searchParams.get('size'));
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		return {
			machine: { id: machine.id, name: machine.name },
			size,
			sizes: Object.entries(LABEL_SIZES).map(([key, s]) => ({ key, title: s.title })),
			page: LABEL_SIZES[size],
			labels: await machineLabels(trx, event.url.origin, shop.slug, machine)
		};
	});
};
