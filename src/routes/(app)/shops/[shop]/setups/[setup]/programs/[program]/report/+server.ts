import { error } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { programFromParams, versionResult } from '$lib/server/programs/load';
import { buildReport } from '$lib/server/programs/report';
import type { RequestHandler } from './$types';

/** The program check as a Markdown file to attach to the job (`?version=N`, default newest). */
export const GET: RequestHandler = async (event) => {
	const { shop, user } = await requireMember(event, 'machines.read');
	const report = await withShop(shop, async (trx) => {
		const { setup, program } = await programFromParams(trx, event.params);
		const r = await versionResult(trx, program.id, event.url.searchParams.get('version'));
		if (!r.detail?.result) return null;
		return buildReport({
			shopName: shop.name,
			setup: { id: setup.id, name: setup.name, job: setup.job },
			program,
			version: r.version,
			check: r.detail.check,
			input: r.detail.input,
			result: r.detail.result,
			lineText: r.lineText,
			generatedAt: new Date(),
			generatedBy: user.name || user.email
		});
	});
	if (!report) error(409, 'This version has not been checked yet; the report comes when it is.');
	return new Response(report.text, {
		headers: {
			'content-type': 'text/markdown; charset=utf-8',
			'content-disposition': `attachment; filename="${report.filename}"`,
			'cache-control': 'private, no-store'
		}
	});
};
