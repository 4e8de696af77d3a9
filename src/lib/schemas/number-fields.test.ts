/**
 * Every number field of every form and API schema in src/lib/schemas goes through the one
 * strict reader (readNumberText). This walks every exported zod schema, so a new form with a
 * plain z.number() / z.coerce.number() fails here, and feeds every number field the inputs
 * that were silently truncated before ("20,5" → 20, "25abc" → 25, "1,000" → 1) through
 * superforms exactly as a browser posts them.
 */
import { describe, expect, it } from 'vitest';
import { superValidate } from 'sveltekit-superforms';
import { zod4 } from 'sveltekit-superforms/adapters';
import { z } from 'zod';
import * as auth from './auth';
import * as billing from './billing';
import * as components from './components';
import * as conversion from './conversion';
import * as fleet from './fleet';
import * as machine from './machine';
import * as members from './members';
import { isStrictNumberField } from './number';
import * as readings from './readings';
import * as settings from './settings';
import * as setups from './setups';
import * as shop from './shop';
import * as tool from './tool';
import * as toolLibrary from './tool-library';

const MODULES = {
	auth,
	billing,
	components,
	conversion,
	fleet,
	machine,
	members,
	readings,
	settings,
	setups,
	shop,
	tool,
	toolLibrary
};

// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Def = any;
const defOf = (s: z.ZodType): Def => (s as Def)._zod.def;

interface Leaf {
	schema: string;
	path: string;
	field: z.ZodType;
	/** A direct key of a flat form object (posted as FormData). */
	top: boolean;
	caught: boolean;
}

/** Walks a schema; collects strict number fields and any other number-typed leaf. */
function walk(
	s: z.ZodType,
	name: string,
	path: string,
	top: boolean,
	out: { strict: Leaf[]; plain: string[] },
	caught = false
) {
	const def = defOf(s);
	if (def.type === 'catch') {
		walk(def.innerType, name, path, top, out, true);
		return;
	}
	if (isStrictNumberField(s)) {
		out.strict.push({ schema: name, path, field: s, top, caught });
		return;
	}
	switch (def.type) {
		case 'number':
		case 'int':
		case 'bigint':
			out.plain.push(`${name}.${path}`);
			return;
		case 'object':
			for (const [k, v] of Object.entries(def.shape as Record<string, z.ZodType>))
				walk(v, name, path ? `${path}.${k}` : k, path === '', out, caught);
			return;
		case 'array':
			walk(def.element, name, `${path}[]`, false, out, caught);
			return;
		case 'pipe':
			walk(def.in, name, path, top, out, caught);
			walk(def.out, name, path, top, out, caught);
			return;
		case 'union':
			for (const o of def.options) walk(o, name, path, false, out, caught);
			return;
		default:
			if (def.innerType) walk(def.innerType, name, path, top, out, caught);
	}
}

const found = { strict: [] as Leaf[], plain: [] as string[] };
const forms: [string, z.ZodType][] = [];
for (const [mod, exports] of Object.entries(MODULES)) {
	for (const [key, value] of Object.entries(exports)) {
		if (value instanceof z.ZodType) {
			forms.push([`${mod}.${key}`, value]);
			walk(value, `${mod}.${key}`, '', true, found);
		}
	}
}

/** Text that used to be read as a different number than the one shown. */
const REFUSED = ['20,5', '25abc', '1,000', '25 mm', '1.5in', '1e3', '0x10', '12 5', '--1', '1.2.3'];

/** The first of these a field accepts on its own (fields differ in range and wholeness). */
const CANDIDATES = ['7', '12', '0.5', '-3.25', '-400.75', '0.001', '0.0001', '0'];

function acceptedText(field: z.ZodType): string | undefined {
	return CANDIDATES.find((c) => field.safeParse(c).success);
}

describe('every number field reads through the one strict reader', () => {
	it('no schema has a plain or coerced number field', () => {
		expect(found.plain).toEqual([]);
	});

	it('finds the number fields of the forms (the walk sees them)', () => {
		const paths = found.strict.map((l) => `${l.schema}.${l.path}`);
		for (const p of [
			'machine.machineFormSchema.zTravel',
			'machine.machineFormSchema.resolution',
			'machine.newMachineSchema.height',
			'machine.newMachineSchema.gaugeLineZ',
			'tool.toolFormSchema.t',
			'tool.toolFormSchema.h',
			'tool.toolFormSchema.stickout',
			'tool.toolFormSchema.nominalLength',
			'conversion.conversionFormSchema.referenceGaugeLineZ',
			'conversion.conversionFormSchema.masterTouchZ',
			'conversion.conversionFormSchema.masterTool',
			'setups.setupFormSchema.clearanceMargin',
			'setups.setupFormSchema.fixtures[].obstacleHeight',
			'setups.setupFormSchema.toolIds[]',
			'fleet.checkHourSchema.hour'
		])
			expect(paths).toContain(p);
	});

	const cases = found.strict.map((l) => [`${l.schema}.${l.path}`, l] as const);

	describe.each(cases)('%s', (_name, leaf) => {
		it.each(REFUSED)('refuses "%s" with the field named, never a truncated number', (bad) => {
			const r = leaf.field.safeParse(bad);
			if (leaf.caught) {
				// A list filter from the URL: a bad value is dropped, never read as a number.
				expect(r.success && r.data).not.toEqual(expect.any(Number));
				return;
			}
			expect(r.success).toBe(false);
			if (!r.success) expect(r.error.issues[0].message).toContain(`"${bad}"`);
		});

		it('keeps an accepted value exactly as typed', () => {
			const good = acceptedText(leaf.field);
			expect(good, 'no candidate value is accepted by this field').toBeDefined();
			const r = leaf.field.safeParse(good);
			expect(r.success && r.data).toBe(Number(good));
		});
	});

	// The posted path: superforms parses FormData before zod; a number field must reach the
	// strict reader as the text typed (before, superforms' parseFloat turned "20,5" into 20).
	const flat = found.strict.filter((l) => l.top && !l.caught);
	describe.each(flat.map((l) => [`${l.schema}.${l.path}`, l] as const))('posted %s', (_n, leaf) => {
		const schema = forms.find(([n]) => n === leaf.schema)![1] as z.ZodObject;
		it.each(['20,5', '25abc', '1,000'])('"%s" is refused on the field', async (bad) => {
			const fd = new FormData();
			fd.set(leaf.path, bad);
			const form = await superValidate(fd, zod4(schema));
			const errors = form.errors as Record<string, string[] | undefined>;
			expect(form.valid).toBe(false);
			expect(errors[leaf.path]?.[0]).toContain(`"${bad}"`);
			// The form comes back with what was typed, not a number made from part of it.
			expect((form.data as Record<string, unknown>)[leaf.path]).toBe(bad);
		});
		it('an accepted value arrives as exactly that number', async () => {
			const good = acceptedText(leaf.field)!;
			const fd = new FormData();
			fd.set(leaf.path, good);
			const form = await superValidate(fd, zod4(schema));
			const errors = form.errors as Record<string, string[] | undefined>;
			expect(errors[leaf.path]).toBeUndefined();
			// Other required fields are missing here, so the form may come back with the text as
			// posted; either way it is the value typed, untouched.
			expect([good, Number(good)]).toContain((form.data as Record<string, unknown>)[leaf.path]);
		});
	});

	it('a JSON number is read by the same rules (finite, whole where whole)', () => {
		const t = tool.toolFormSchema.shape.t;
		expect(t.safeParse(12).success).toBe(true);
		expect(t.safeParse(12.5).success).toBe(false);
		expect(t.safeParse(Number.NaN).success).toBe(false);
		expect(machine.machineFormSchema.shape.zTravel.safeParse(Infinity).success).toBe(false);
		expect(machine.machineFormSchema.shape.zTravel.safeParse(20.5)).toEqual({
			success: true,
			data: 20.5
		});
	});

	it('a length with more decimals than the database keeps is refused, not rounded', () => {
		const r = machine.newMachineSchema.shape.height.safeParse('25.40001');
		expect(r.success).toBe(false);
		expect(machine.newMachineSchema.shape.height.safeParse('25.4000000').data).toBe(25.4);
	});
});
