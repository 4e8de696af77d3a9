/**
 * The label sheet of one machine (DESIGN.md §7 "Label sheet"): a QR code and plain text for the
 * machine, each fixture and each tool. Each code holds a URL of this server that opens the
 * item's touch-off page (the machine's: machine mode); signed out, sign-in returns to it (the
 * guard's `next`). Codes are drawn by the qrcode package as SVG, so they print sharp at any size.
 */
import type { Knex } from 'knex';
import QRCode from 'qrcode';
import type { MachineRecord } from '../offsets/machine-state';

export const LABEL_SIZES = {
	label: {
		title: 'Label printer, 62 × 29 mm, one label per page',
		page: '62mm 29mm',
		margin: '0'
	},
	a4: { title: 'A4 sheet, 3 × 8 labels of 70 × 37 mm', page: 'A4', margin: '0' },
	letter: {
		title: 'Letter sheet, 3 × 10 labels of 2⅝ × 1 in',
		page: 'letter',
		margin: '0.5in 0.19in'
	}
} as const;
export type LabelSize = keyof typeof LABEL_SIZES;

export const labelSizeOf = (raw: string | null): LabelSize =>
	raw === 'label' || raw === 'letter' ? raw : 'a4';

export interface Label {
	kind: 'machine' | 'fixture' | 'tool';
	/** Big text: "Mill 1", "G54", "T2 · H2". */
	title: string;
	/** Small text: what it is. */
	detail: string;
	url: string;
	/** The QR code as an SVG element (markup from the qrcode package, no user text inside). */
	svg: string;
}

/** URLs the labels open, for the machine and each fixture and tool (absolute, this server). */
export const labelUrls = (origin: string, shopSlug: string, machineId: number) => {
	const base = `${origin}/shops/${shopSlug}/machines/${machineId}`;
	return {
		machine: `${base}/machine-mode`,
		fixture: (id: number) => `${base}/readings/part-top/${id}`,
		tool: (id: number) => `${base}/readings/tool/${id}`
	};
};

const qr = (url: string) =>
	QRCode.toString(url, { type: 'svg', errorCorrectionLevel: 'M', margin: 2 });

/** Every label of the machine: the machine, its fixtures (by register), its tools (by T). */
export async function machineLabels(
	trx: Knex.Transaction,
	origin: string,
	shopSlug: string,
	machine: MachineRecord
): Promise<Label[]> {
	const urls = labelUrls(origin, shopSlug, machine.id);
	const fixtures = await trx('fixtures')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.orderBy('register')
		.select('id', 'register', 'name');
	const tools = await trx('tools')
		.where({ machine_id: machine.id })
		.whereNull('archived_at')
		.orderBy('t_number')
		.select('id', 't_number', 'h_number', 'description');
	const items: Omit<Label, 'svg'>[] = [
		{
			kind: 'machine',
			title: machine.name,
			detail: 'Machine mode: touch off here',
			url: urls.machine
		},
		...fixtures.map((f) => ({
			kind: 'fixture' as const,
			title: f.register,
			detail: `${machine.name} · ${f.name} · part top`,
			url: urls.fixture(Number(f.id))
		})),
		...tools.map((t) => ({
			kind: 'tool' as const,
			title: `T${t.t_number} · H${t.h_number}`,
			detail: `${machine.name} · ${t.description}`,
			url: urls.tool(Number(t.id))
		}))
	];
	return Promise.all(items.map(async (i) => ({ ...i, svg: await qr(i.url) })));
}
