import bcrypt from 'bcryptjs';
import type { Knex } from 'knex';
import { seedProgram } from '$lib/server/programs/store';
import { provisionShop } from '$lib/server/shops/provision';
import { getSetupDetail } from '$lib/server/setups/queries';
import { getMachine } from '$lib/server/offsets/machine-state';
import { recordReadback } from '$lib/server/readbacks/record';
import { demoShops, DEMO_PASSWORD, type DemoMachine } from './demo-data';

const DAY = 86_400_000;

/** Rounds to the machine's least increment (demo numbers are already at it; this guards typos). */
function atResolution(value: number, resolution: number): number {
	const steps = Math.round(value / resolution);
	return Number((steps * resolution).toFixed(resolution < 0.001 ? 4 : 3));
}

/**
 * Loads the demo scenario (seeds/demo-data.ts) into an empty database: people, both shops with
 * their schemas, machines, references, fixtures, tools, touch-off readings with the offsets
 * computed from them, and setups. Returns what it created, for the start-up banner.
 */
export async function seedDemo(
	knex: Knex,
	now = new Date()
): Promise<{ shops: string[]; people: string[] }> {
	const hash = await bcrypt.hash(DEMO_PASSWORD, 10);
	const ago = (days: number) => new Date(now.getTime() - days * DAY);
	const people: string[] = [];

	for (const shop of demoShops) {
		const userIds = new Map<string, number>();
		for (const person of shop.people) {
			const [u] = await knex('users')
				.insert({ email: person.email, name: person.name, password_hash: hash })
				.returning('id');
			userIds.set(person.email, Number(u.id));
			people.push(`${person.email} (${person.role}, ${shop.name})`);
		}
		const lead = userIds.get(
			shop.people.find((p) => p.role === 'lead' || p.role === 'owner')!.email
		)!;
		const operator = userIds.get(
			(shop.people.find((p) => p.role === 'operator') ?? shop.people[0]).email
		)!;

		await provisionShop(
			knex,
			{ name: shop.name, slug: shop.slug, timeZone: shop.timeZone },
			async (trx, created) => {
				await trx('public.memberships').insert(
					shop.people.map((p) => ({
						user_id: userIds.get(p.email),
						shop_id: created.id,
						role: p.role
					}))
				);
				await trx.raw('set local search_path to ??, public', [created.schemaName]);
				for (const machine of shop.machines) {
					await seedMachine(trx, machine, { lead, operator, ago, shopId: created.id });
				}
				await trx('audit_log').insert({
					actor_user_id: userIds.get(shop.people[0].email),
					actor_email: shop.people[0].email,
					action: 'shop.created',
					target: shop.slug,
					detail: JSON.stringify({ source: 'demo seed' })
				});
			}
		);
	}
	return { shops: demoShops.map((s) => s.name), people };
}

async function seedMachine(
	trx: Knex.Transaction,
	m: DemoMachine,
	ctx: { lead: number; operator: number; ago: (days: number) => Date; shopId: number }
): Promise<void> {
	const [machine] = await trx('machines')
		.insert({
			name: m.name,
			units: m.units,
			z_travel: m.zTravel,
			resolution: m.resolution,
			control_style: m.controlStyle,
			// The G10 L10 form's machines have the usual 48 extended work offsets (issue 16).
			extended_work_offsets: m.controlStyle === 'iso' ? 48 : 0,
			convention: m.convention,
			notes: m.notes,
			created_at: ctx.ago(Math.max(...m.references.map((r) => r.daysAgo)) + 1)
		})
		.returning('id');
	const machineId = Number(machine.id);

	let version = 0;
	const versionAt = (daysAgo: number) =>
		m.references.filter((r) => r.daysAgo >= daysAgo).length || 1;
	for (const ref of m.references) {
		version += 1;
		await trx('reference_surfaces').insert({
			machine_id: machineId,
			version,
			instrument: ref.instrument,
			height: ref.height,
			location: ref.location,
			gauge_line_z: ref.gaugeLineZ ?? null,
			established_by: ctx.lead,
			established_at: ctx.ago(ref.daysAgo),
			note: ref.note
		});
	}
	const gaugeLineZ = m.references.at(-1)?.gaugeLineZ;

	// Tool length offsets. Reference-touch: H = reading − block (the tip sits on the surface).
	// Gauge-length: H = reading − block − R, the tool's own length below the gauge line.
	const toolOffsets = new Map<number, number>();
	const toolIds = new Map<number, number>();
	for (const tool of m.tools) {
		const [row] = await trx('tools')
			.insert({
				machine_id: machineId,
				t_number: tool.t,
				h_number: tool.h,
				description: tool.description,
				holder: tool.holder,
				stickout: tool.stickout
			})
			.returning('id');
		toolIds.set(tool.t, Number(row.id));
		for (const touch of tool.touches) {
			const block = touch.block ?? 0;
			const tipAtSurface = touch.z - block;
			const value = atResolution(
				m.convention === 'gauge-length' ? tipAtSurface - gaugeLineZ! : tipAtSurface,
				m.resolution
			);
			const [reading] = await trx('readings')
				.insert({
					machine_id: machineId,
					kind: touch.toolChanged ? 'tool-remeasure' : 'tool-touch',
					tool_id: row.id,
					machine_z: touch.z,
					block_height: block,
					instrument: block ? `${block} gauge block on the reference` : 'direct on the reference',
					reference_version: versionAt(touch.daysAgo),
					tool_changed: touch.toolChanged ?? false,
					reason: touch.reason ?? '',
					taken_by: ctx.operator,
					taken_at: ctx.ago(touch.daysAgo)
				})
				.returning('id');
			await trx('offset_versions').insert({
				machine_id: machineId,
				register_kind: 'tool',
				register: String(tool.h),
				value,
				units: m.units,
				convention: m.convention,
				reading_id: reading.id,
				reference_version: versionAt(touch.daysAgo),
				created_by: ctx.operator,
				created_at: ctx.ago(touch.daysAgo)
			});
			toolOffsets.set(tool.t, value);
		}
	}

	// Work offsets from a part-top touch with a tool of known offset H_t:
	// the reading is R + h + L_t, so h = reading − (R + L_t). Reference-touch stores W = h;
	// gauge-length stores W = R + h = reading − L_t.
	const fixtureIds = new Map<string, number>();
	for (const f of m.fixtures) {
		const [row] = await trx('fixtures')
			.insert({
				machine_id: machineId,
				register: f.register,
				name: f.name,
				description: f.description
			})
			.returning('id');
		fixtureIds.set(f.register, Number(row.id));
		const h = toolOffsets.get(f.partTop.withTool)!;
		const value = atResolution(f.partTop.z - h, m.resolution);
		const [reading] = await trx('readings')
			.insert({
				machine_id: machineId,
				kind: 'part-top',
				fixture_id: row.id,
				tool_id: toolIds.get(f.partTop.withTool),
				machine_z: f.partTop.z,
				instrument: `T${f.partTop.withTool} on the part top`,
				reference_version: versionAt(f.partTop.daysAgo),
				taken_by: ctx.operator,
				taken_at: ctx.ago(f.partTop.daysAgo)
			})
			.returning('id');
		await trx('offset_versions').insert({
			machine_id: machineId,
			register_kind: 'work',
			register: f.register,
			value,
			units: m.units,
			convention: m.convention,
			reading_id: reading.id,
			reference_version: versionAt(f.partTop.daysAgo),
			created_by: ctx.operator,
			created_at: ctx.ago(f.partTop.daysAgo)
		});
	}

	for (const s of m.setups) {
		const [setup] = await trx('setups')
			.insert({
				machine_id: machineId,
				name: s.name,
				job: s.job,
				status: s.status,
				clearance_margin: s.margin,
				created_by: ctx.lead,
				created_at: ctx.ago(4)
			})
			.returning('id');
		await trx('setup_status_changes').insert({
			setup_id: setup.id,
			from_status: null,
			to_status: s.status,
			changed_by: ctx.lead,
			changed_at: ctx.ago(4)
		});
		await trx('setup_fixtures').insert(
			s.fixtures.map((f) => ({
				setup_id: setup.id,
				fixture_id: fixtureIds.get(f.register),
				obstacle_height: f.obstacle
			}))
		);
		await trx('setup_tools').insert(
			s.tools.map((t) => ({ setup_id: setup.id, tool_id: toolIds.get(t) }))
		);
		await trx('setup_ops').insert(
			s.ops.map((op, i) => ({
				setup_id: setup.id,
				sequence: i + 1,
				name: op.name,
				fixture_id: fixtureIds.get(op.register)
			}))
		);
		for (const p of s.programs ?? []) {
			const detail = await getSetupDetail(trx, Number(setup.id));
			const program = { name: p.name, fileName: p.fileName, text: p.lines.join('\n') + '\n' };
			await seedProgram(trx, detail!, program, { id: ctx.lead, email: '' }, ctx.ago(0));
		}
	}

	// Read-backs go through the same path as the page, so their findings are stored too.
	const record = (await getMachine(trx, machineId))!;
	for (const rb of m.readbacks ?? []) {
		const at = ctx.ago(rb.hoursAgo / 24);
		const actor = { id: ctx.operator, email: '' };
		await recordReadback(
			trx,
			ctx.shopId,
			record,
			actor,
			rb.file
				? {
						source: 'file',
						fileName: rb.file.name,
						text: rb.file.lines.join('\r\n') + '\r\n',
						note: rb.note
					}
				: {
						source: 'typed',
						values: { work: rb.typed?.work ?? {}, tools: rb.typed?.tools ?? {}, wear: {} },
						note: rb.note
					},
			at
		);
	}
}
