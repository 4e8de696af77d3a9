import { z } from 'zod';
import { idField, lengthField, numberField } from './number';

/** Setup states, in the order a setup moves through them. */
export const SETUP_STATES = ['planned', 'on-machine', 'proven', 'closed'] as const;
export type SetupState = (typeof SETUP_STATES)[number];

export const SETUP_STATE_LABEL: Record<SetupState, string> = {
	planned: 'Planned',
	'on-machine': 'On machine',
	proven: 'Proven',
	closed: 'Closed'
};

/** What each state means, for the page (our own words). */
export const SETUP_STATE_HINT: Record<SetupState, string> = {
	planned: 'Not on the table yet: fixtures, tools and ops can still change.',
	'on-machine': 'Fixtures are on the table and offsets are being set.',
	proven: 'First part checked good: the offsets of this setup are trusted.',
	closed: 'Off the machine. Copy it to run the job again.'
};

/** The one step forward from each state (closed is the end). */
export const NEXT_STATE: Record<SetupState, SetupState | null> = {
	planned: 'on-machine',
	'on-machine': 'proven',
	proven: 'closed',
	closed: null
};

/** Setups can be edited until they are proven; after that, copy them. */
export const EDITABLE_STATES: readonly SetupState[] = ['planned', 'on-machine'];

const id = (what: string) => idField(what);

const height = (what: string) =>
	lengthField(what, {
		min: 0,
		rangeMessage: `${what} cannot be negative: it is a height above the reference.`
	});

/** One fixture on the table in this setup and the tallest thing on it (clamp, jaw, part top). */
export const setupFixtureFormSchema = z.object({
	fixtureId: id('Fixture'),
	obstacleHeight: height('Obstacle height')
});

export const setupOpFormSchema = z.object({
	name: z
		.string()
		.trim()
		.min(1, 'Each op needs a name, e.g. "Op A — face and drill".')
		.max(120, 'Op name is too long (120 characters at most).'),
	/** 0 = no fixture chosen. */
	fixtureId: numberField('Fixture', {
		whole: true,
		min: 0,
		rangeMessage: 'Fixture must be chosen from the list.'
	}).default(0),
	notes: z.string().trim().max(2000, 'Notes are too long (2000 characters at most).').default('')
});

/** Creating or editing a setup. Heights and margin are in the machine's units. */
export const setupFormSchema = z.object({
	machineId: id('Machine'),
	name: z
		.string()
		.trim()
		.min(1, 'Give the setup a name, e.g. "Pump housing, ops A and B".')
		.max(120, 'Name is too long (120 characters at most).'),
	job: z.string().trim().max(200, 'Job is too long (200 characters at most).').default(''),
	clearanceMargin: height('Clearance margin'),
	fixtures: z
		.array(setupFixtureFormSchema)
		.min(1, 'Choose at least one fixture: clearance planes need one.')
		.default([]),
	toolIds: z.array(id('Tool')).default([]),
	ops: z.array(setupOpFormSchema).default([])
});
export type SetupForm = z.infer<typeof setupFormSchema>;

export const setupStatusSchema = z.object({
	to: z.enum(SETUP_STATES, { message: `State must be one of: ${SETUP_STATES.join(', ')}.` }),
	note: z.string().trim().max(500, 'Note is too long (500 characters at most).').default('')
});

export const photoCaptionSchema = z.object({
	caption: z.string().trim().max(200, 'Caption is too long (200 characters at most).').default('')
});

export const photoIdSchema = z.object({
	photoId: idField('Photo', 'Unknown photo.')
});

/** A machine with its fixtures and tools, for the setup form's pickers. */
export interface MachineChoice {
	id: number;
	name: string;
	units: 'inch' | 'mm';
	resolution: number;
	zTravel: number;
	fixtures: { id: number; register: string; name: string }[];
	tools: { id: number; t: number; h: number; description: string }[];
}

export const copySetupSchema = z.object({
	name: z
		.string()
		.trim()
		.min(1, 'Give the copy a name.')
		.max(120, 'Name is too long (120 characters at most).')
});
