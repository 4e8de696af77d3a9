import { TOUCH_THROUGH, type TouchThrough } from '$lib/schemas/readings';

/**
 * What a reading form starts with when opened from a reading kept on the device (the queue's
 * "open the form" link): the operator's own inputs, so a reading held back for a decision can
 * be looked at, worked out again and saved (or not) at the form. Anything malformed is left out;
 * the form's own checks run as always when it is worked out.
 */
export function prefillReading(url: URL): {
	machineZ?: string;
	touchedThrough?: TouchThrough;
	blockHeight?: string;
	reason?: string;
	withToolId?: string;
	fixtureChanged?: boolean;
} {
	const q = url.searchParams;
	const short = (k: string, max = 40) => {
		const v = q.get(k);
		return v !== null && v.length <= max ? v : undefined;
	};
	const through = q.get('touchedThrough');
	const withToolId = q.get('withToolId');
	const out: ReturnType<typeof prefillReading> = {};
	const machineZ = short('machineZ');
	if (machineZ !== undefined) out.machineZ = machineZ;
	if (through && (TOUCH_THROUGH as readonly string[]).includes(through))
		out.touchedThrough = through as TouchThrough;
	const block = short('blockHeight');
	if (block !== undefined) out.blockHeight = block;
	const reason = short('reason', 500);
	if (reason !== undefined) out.reason = reason;
	if (withToolId && /^\d{1,18}$/.test(withToolId)) out.withToolId = withToolId;
	if (q.get('fixtureChanged') === '1') out.fixtureChanged = true;
	return out;
}
