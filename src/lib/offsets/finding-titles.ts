/**
 * Plain-words titles for every finding kind (DESIGN.md §7: kinds are codes for the code; people
 * read a title). One table used by every screen and e-mail that names a finding: the fleet
 * board, the findings page, the digest, the reading preview, the setup page and sheet.
 */
import { FINDING_KINDS, type FindingKind } from './findings';

/** Kinds stored by the app that the engine does not produce itself. */
export const APP_FINDING_KINDS = ['override'] as const;
export type AppFindingKind = (typeof APP_FINDING_KINDS)[number];

export const FINDING_TITLE: Readonly<Record<FindingKind | AppFindingKind, string>> = {
	sign: 'Wrong sign for the convention',
	'out-of-travel': 'Outside the Z travel',
	'unit-slip': 'Probably typed in the wrong unit',
	'decimal-slip': 'Decimal point probably in the wrong place',
	'sign-flip': 'Minus sign probably added or dropped',
	'transposed-digits': 'Two digits probably swapped',
	jump: 'Changed more than the shop allows',
	'stale-age': "Offset older than the shop's limit",
	'stale-reference': 'Measured before the reference was re-set',
	'duplicate-register': 'One register used twice',
	unset: 'Used but never measured',
	'low-traverse': 'Rapid move below the clearance plane',
	'no-length-comp': 'Z move without tool length compensation',
	'units-mismatch': 'Program units differ from the machine',
	'unknown-work-offset': 'Work offset not in the table',
	'unknown-tool-offset': 'Tool length offset not in the table',
	overtravel: 'Move beyond the Z travel',
	'parse-error': 'Line the control cannot read',
	'rapid-into-part': 'Rapid move down into the part',
	'heights-unknown': 'Heights the check cannot follow',
	'readback-mismatch': 'Control holds a different value',
	unverified: 'Changed but not verified at the control',
	override: 'Saved over a Stop (override)'
};

/** The title of a kind; an unknown code (an old stored row) gets a neutral title, never the code. */
export function findingTitle(kind: string): string {
	return (FINDING_TITLE as Record<string, string>)[kind] ?? 'Something to check';
}

/** Every kind with a title, for tests and legends. */
export const TITLED_KINDS = [...FINDING_KINDS, ...APP_FINDING_KINDS] as const;
