/**
 * The three ways shops split a Z distance between the work offset and the tool length
 * offset (DESIGN.md §2). Physical quantities, all in one unit:
 * - R: machine Z of the spindle gauge line if it sat on the reference surface (negative,
 *   Z homes at the top of travel — common shop practice);
 * - L_i: tool i's length below the gauge line (positive);
 * - h_k: height of fixture k's program zero above the reference;
 * - L_m: the master tool's length (master-tool convention only).
 *
 * | convention      | tool offset H_i | work offset W_k   |
 * | reference-touch | R + L_i         | h_k               |
 * | gauge-length    | L_i             | R + h_k           |
 * | master-tool     | L_i − L_m       | R + h_k + L_m     |
 *
 * In every convention W_k + H_i = R + h_k + L_i: the spindle's machine Z at program Z0.
 */

/** The offset convention a machine's table is kept in. */
export type Convention = 'reference-touch' | 'gauge-length' | 'master-tool';

/** All conventions, for schemas and pickers. */
export const CONVENTIONS = ['reference-touch', 'gauge-length', 'master-tool'] as const;

/** Plain labels for screens and documents. */
export const CONVENTION_LABEL: Readonly<Record<Convention, string>> = {
	'reference-touch': 'Reference touch (tool tip touched on the reference)',
	'gauge-length': 'Gauge length (tool measured from the gauge line)',
	'master-tool': 'Master tool (lengths relative to one master tool)'
};

/** The physical set-up behind a table, used to build one in any convention. */
export interface PhysicalGeometry {
	/** R: gauge-line machine Z on the reference surface. */
	referenceGaugeLineZ: number;
	/** L_i by H number. */
	toolLengths: Record<string, number>;
	/** h_k by work register. */
	zeroHeights: Record<string, number>;
	/** H number of the master tool (master-tool convention). */
	masterTool?: string;
}

/** Sign a value is expected to have in a convention: the `sign` finding relies on it. */
export type ExpectedSign = 'negative' | 'positive' | 'any';

/**
 * Expected signs per convention. Reference-touch tool offsets are machine Z of the gauge line
 * with the tip on the reference: negative. Gauge-length tool offsets are lengths: positive.
 * Work offsets that contain R are negative. Reference-touch work offsets are heights above
 * the reference, normally small and positive, and master-tool tool offsets are differences.
 */
export const EXPECTED_SIGN: Readonly<
	Record<Convention, { tool: ExpectedSign; work: ExpectedSign }>
> = {
	'reference-touch': { tool: 'negative', work: 'positive' },
	'gauge-length': { tool: 'positive', work: 'negative' },
	'master-tool': { tool: 'any', work: 'negative' }
};

/**
 * Which values move when the reference has to be re-established (DESIGN.md §2).
 * `machineShift`: machine Z itself moved (home re-set after a crash or repair): everything
 * measured in machine coordinates shifts. `surfaceMoved`: the reference block was re-placed
 * at a different height while the parts stayed put.
 */
export const REFERENCE_DEPENDENCE: Readonly<
	Record<
		Convention,
		{
			machineShift: { tools: boolean; work: boolean };
			surfaceMoved: { tools: boolean; work: boolean };
		}
	>
> = {
	'reference-touch': {
		machineShift: { tools: true, work: false },
		surfaceMoved: { tools: true, work: true }
	},
	'gauge-length': {
		machineShift: { tools: false, work: true },
		surfaceMoved: { tools: false, work: false }
	},
	'master-tool': {
		machineShift: { tools: false, work: true },
		surfaceMoved: { tools: false, work: false }
	}
};
