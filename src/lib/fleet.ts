/**
 * Fleet board and findings shapes shared by the server, the JSON API and the pages (no server
 * imports). Health words and icons follow DESIGN.md §8: never colour alone.
 */
export type Health = 'ok' | 'caution' | 'stop' | 'stale' | 'unset';

/** Worst first, for sorting the board. */
export const HEALTH_ORDER: Record<Health, number> = {
	stop: 0,
	stale: 1,
	caution: 2,
	unset: 3,
	ok: 4
};

export interface FleetMachine {
	id: number;
	name: string;
	units: 'inch' | 'mm';
	health: Health;
	/** Why, in a few plain words ("2 offsets measured before the reference was re-set"). */
	reason: string;
	setup: { id: number; name: string; status: string } | null;
	/** Findings not yet resolved: open ones by severity, and those a lead has acknowledged. */
	findings: { stop: number; caution: number; acknowledged: number };
	registers: number;
	staleReference: number;
	staleAge: number;
	lastReadingAt: string | null;
	referenceAt: string | null;
	referenceVersion: number | null;
	/** Values saved over a Stop and not yet replaced (who, what, why: the finding's words). */
	overrides: { subject: string; message: string }[];
	/** Registers in use by active setups: how many, not verified at the control, mismatched (issue 16). */
	atControl: { inUse: number; unverified: number; mismatched: number };
}

export interface LastCheck {
	jobId: string;
	trigger: 'nightly' | 'manual';
	status: 'running' | 'done' | 'failed';
	checkedAt: string;
	finishedAt: string | null;
	opened: number;
	stillOpen: number;
	resolved: number;
	machines: number;
}

export interface FleetBoard {
	machines: FleetMachine[];
	lastCheck: LastCheck | null;
	generatedAt: string;
}

/** A "Check now" job as the page follows it. */
export interface CheckProgress {
	jobId: string;
	state: 'waiting' | 'running' | 'done' | 'failed';
	machinesDone: number;
	machinesTotal: number | null;
	opened: number;
	stillOpen: number;
	resolved: number;
	error: string;
}

export const SETUP_STATUS_LABEL: Record<string, string> = {
	planned: 'Planned',
	'on-machine': 'On the machine',
	proven: 'Proven',
	closed: 'Closed'
};

export const FINDING_STATUS_LABEL = {
	open: 'Open',
	acknowledged: 'Acknowledged',
	resolved: 'Resolved'
} as const;
export type FindingStatus = keyof typeof FINDING_STATUS_LABEL;
