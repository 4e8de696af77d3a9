/**
 * Tool length offsets from a length measured off the machine (a presetter gives the tool's
 * gauge length L: tip below the holder's gauge line), in each convention (DESIGN.md §2):
 * - gauge-length: H = L;
 * - reference-touch: H = R + L, with R the gauge-line machine Z on this machine's reference;
 * - master-tool: H = L − L_m, with L_m the master's gauge length (measured on the presetter,
 *   or worked out as masterTouchZ − R on the machine).
 * A touch-off on the machine gives the same H for the same tool (readings.ts: touchZ − s =
 * R + L); the property test holds the two together. A tool that moves between machines keeps
 * its L; only R (and the master) belong to the machine.
 */
import type { Convention } from './conventions';
import { OffsetInputError } from './errors';
import { fromMicro, resolutionFor, roundToResolution, toMicro, type Units } from './units';

function finite(field: string, value: unknown): number {
	if (typeof value !== 'number' || !Number.isFinite(value)) {
		throw OffsetInputError.of(field, value, 'must be a finite number');
	}
	return value;
}

const R_NEEDED =
	"is needed to turn a presetter length into this machine's offset: record the machine's reference (R, the gauge line's machine Z on the reference) first";

/**
 * H for a tool of presetter gauge length `gaugeLength` on a machine.
 * @throws OffsetInputError for a length ≤ 0, or R / the master's length missing where the
 * convention needs it
 */
export function toolOffsetFromPresetter(input: {
	convention: Convention;
	units: Units;
	gaugeLength: number;
	referenceGaugeLineZ?: number;
	masterGaugeLength?: number;
	masterTouchZ?: number;
	resolution?: number;
}): number {
	const L = finite('gaugeLength', input.gaugeLength);
	if (L <= 0) {
		throw OffsetInputError.of(
			'gaugeLength',
			L,
			'must be greater than zero: a gauge length is measured down from the gauge line'
		);
	}
	const res = resolutionFor(input.units, input.resolution);
	const lMicro = toMicro(L);
	let h: number;
	switch (input.convention) {
		case 'gauge-length':
			h = lMicro;
			break;
		case 'reference-touch': {
			if (input.referenceGaugeLineZ === undefined) {
				throw OffsetInputError.of('referenceGaugeLineZ', undefined, R_NEEDED);
			}
			h = toMicro(finite('referenceGaugeLineZ', input.referenceGaugeLineZ)) + lMicro;
			break;
		}
		case 'master-tool': {
			let master: number;
			if (input.masterGaugeLength !== undefined) {
				master = toMicro(finite('masterGaugeLength', input.masterGaugeLength));
			} else if (input.masterTouchZ !== undefined && input.referenceGaugeLineZ !== undefined) {
				master =
					toMicro(finite('masterTouchZ', input.masterTouchZ)) -
					toMicro(finite('referenceGaugeLineZ', input.referenceGaugeLineZ));
			} else {
				throw OffsetInputError.of(
					'masterGaugeLength',
					undefined,
					"is needed for the master-tool convention: measure the master tool on the presetter too, or give the machine's R and the master's reading on the reference"
				);
			}
			h = lMicro - master;
			break;
		}
		default:
			throw OffsetInputError.of(
				'convention',
				input.convention,
				'must be reference-touch, gauge-length or master-tool'
			);
	}
	return roundToResolution(fromMicro(h), res);
}
