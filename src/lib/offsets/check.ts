/**
 * checkOffsets: every table and history finding of DESIGN.md §3 for one machine. Findings are
 * data, not errors: a wrong value is what this function exists to catch. It throws
 * OffsetInputError only when the input itself cannot be read (NaN, unknown register, a table
 * in another convention or unit than the machine).
 */
import { checkRegisterHistory, toMillis } from './check-history';
import { clearancePlanes } from './clearance';
import { EXPECTED_SIGN, REFERENCE_DEPENDENCE } from './conventions';
import { OffsetInputError } from './errors';
import { makeFinding, sortFindings, type Finding } from './findings';
import { formatWithUnits } from './format';
import { resolvePolicy } from './policy';
import { canonicalH, canonicalRegister } from './registers';
import { checkInputSchema } from './schemas';
import { findClashes, machineName, normalizeTable, travelLimits } from './table';
import type { CheckInput, HistoryEntry } from './types';
import { fromMicro, resolutionFor, toMicro, toUnits } from './units';
import { parseInput } from './validate';

/**
 * Checks a machine's offset table and its history. See docs/OFFSETS.md for each kind.
 * @param input machine (units, Z travel, resolution, convention), table, history per register,
 *   referenceEstablishedAt, now, setups (fixture/tool pairs), used / unmeasured registers, policy
 * @returns findings, `stop` before `caution`; an empty list for a clean table
 * @throws OffsetInputError when the input cannot be read
 */
export function checkOffsets(input: CheckInput): Finding[] {
	const i = parseInput(checkInputSchema, input, 'input');
	const machine = i.machine;
	const table = normalizeTable(i.table, 'input.table', true);
	if (machine.units !== table.units) {
		throw OffsetInputError.of(
			'input.table.units',
			table.units,
			`differs from ${machineName(machine)}, which works in ${machine.units}: convert the table first`
		);
	}
	if (machine.convention !== undefined && machine.convention !== table.convention) {
		throw OffsetInputError.of(
			'input.table.convention',
			table.convention,
			`differs from ${machineName(machine)}, which uses ${machine.convention}: convert the table first`
		);
	}
	const units = table.units;
	const resolution = resolutionFor(units, machine.resolution);
	const policy = resolvePolicy(i.policy, units);
	const fmt = (v: number) => formatWithUnits(v, units, resolution);
	const { min, max } = travelLimits(machine);
	const span = toMicro(max) - toMicro(min);
	const findings: Finding[] = [];
	const convention = table.convention;
	const master = table.masterTool ?? machine.masterTool;

	// duplicate-register: one register typed twice in the table
	for (const clash of findClashes(i.table)) {
		const subject =
			clash.section === 'work'
				? { type: 'fixture' as const, register: clash.canonical }
				: { type: 'tool' as const, h: clash.canonical };
		const label = clash.section === 'work' ? clash.canonical : `H${clash.canonical}`;
		const values = clash.keys.map((k) => fmt(i.table[clash.section][k])).join(' and ');
		findings.push(
			makeFinding(
				'duplicate-register',
				'stop',
				subject,
				`${label} is in the table more than once (as ${clash.keys.map((k) => `"${k}"`).join(' and ')}, holding ${values}). Keep the entry that was measured and delete the other.`
			)
		);
	}
	// duplicate-register: two fixtures (or two tools) of one setup share a register
	for (const setup of i.setups ?? []) {
		const byRegister = new Map<string, string[]>();
		setup.fixtures.forEach((f, n) => {
			const r = canonicalRegister(f.register)!;
			byRegister.set(r, [...(byRegister.get(r) ?? []), f.id ?? `fixture ${n + 1}`]);
		});
		for (const [r, ids] of byRegister) {
			if (new Set(ids).size > 1) {
				findings.push(
					makeFinding(
						'duplicate-register',
						'stop',
						{ type: 'setup', id: setup.id, register: r },
						`${ids.join(' and ')} in ${setup.name ?? setup.id ?? 'this setup'} both use ${r}, so one of them runs on the other's work offset. Give each fixture its own register.`
					)
				);
			}
		}
		const byH = new Map<string, string[]>();
		(setup.tools ?? []).forEach((t, n) => {
			const h = canonicalH(t.h)!;
			byH.set(h, [...(byH.get(h) ?? []), t.id ?? `tool ${n + 1}`]);
		});
		for (const [h, ids] of byH) {
			if (new Set(ids).size > 1) {
				findings.push(
					makeFinding(
						'duplicate-register',
						'stop',
						{ type: 'setup', id: setup.id, h },
						`${ids.join(' and ')} in ${setup.name ?? setup.id ?? 'this setup'} both use H${h}, so one of them cuts with the other's length. Give each tool its own H number.`
					)
				);
			}
		}
	}

	// sign, and single values bigger than the whole travel
	const sections = [
		['work', table.work, EXPECTED_SIGN[convention].work],
		['tools', table.tools, EXPECTED_SIGN[convention].tool]
	] as const;
	for (const [section, values, expected] of sections) {
		for (const [key, value] of Object.entries(values)) {
			const subject =
				section === 'work'
					? { type: 'fixture' as const, register: key }
					: { type: 'tool' as const, h: key };
			const label = section === 'work' ? key : `H${key}`;
			const v = toMicro(value);
			if (Math.abs(v) > span) {
				findings.push(
					makeFinding(
						'out-of-travel',
						'stop',
						subject,
						`${label} is ${fmt(value)}, more than the machine's whole Z travel of ${fmt(fromMicro(span))}: no tool or fixture can need that. Re-measure it or re-enter it from the reading.`,
						{ value }
					)
				);
				continue;
			}
			const wrong = (expected === 'negative' && v > 0) || (expected === 'positive' && v < 0);
			if (!wrong) continue;
			const what = section === 'work' ? 'a work offset' : 'a tool length offset';
			// a reference-touch work offset below the reference is unusual but possible
			const severity = convention === 'reference-touch' && section === 'work' ? 'caution' : 'stop';
			findings.push(
				makeFinding(
					'sign',
					severity,
					subject,
					`${label} is ${fmt(value)}, but in the ${convention} convention ${what} is ${expected}. Check the sign against the reading and re-enter it.`,
					{ value, expected }
				)
			);
		}
	}

	// out-of-travel: the spindle at program zero (and at the clearance plane) for each pair
	for (const setup of i.setups ?? []) {
		let planes: Record<string, number>;
		try {
			planes = clearancePlanes(setup, i.policy);
		} catch {
			planes = {}; // a setup that repeats a register is reported above as duplicate-register
		}
		const hs = setup.tools?.length
			? [...new Set(setup.tools.map((t) => canonicalH(t.h)!))]
			: Object.keys(table.tools);
		for (const f of setup.fixtures) {
			const r = canonicalRegister(f.register)!;
			const w = table.work[r];
			if (w === undefined) continue;
			for (const h of hs) {
				const tool =
					table.tools[h] ?? (convention === 'master-tool' && h === master ? 0 : undefined);
				if (tool === undefined) continue;
				const z = toMicro(w) + toMicro(tool);
				const subject = { type: 'setup' as const, id: setup.id, register: r, h };
				if (z < toMicro(min) || z > toMicro(max)) {
					findings.push(
						makeFinding(
							'out-of-travel',
							'stop',
							subject,
							`With ${r} and H${h}, program Z0 puts the spindle at machine Z ${fmt(fromMicro(z))}, outside the Z travel (${fmt(min)} to ${fmt(max)}). One of the two offsets is wrong: re-measure both before running this setup.`,
							{ spindleZ: fromMicro(z), min, max }
						)
					);
					continue;
				}
				const plane = planes[r];
				if (plane === undefined) continue;
				const top = z + toMicro(toUnits(plane, setup.units, units));
				if (top > toMicro(max)) {
					findings.push(
						makeFinding(
							'out-of-travel',
							'caution',
							subject,
							`With ${r} and H${h}, the clearance plane (${fmt(toUnits(plane, setup.units, units))} above program zero) is above the top of Z travel. Use a shorter tool or lower the stack, and check the retract moves.`,
							{ spindleZ: fromMicro(z), clearanceZ: fromMicro(top), max }
						)
					);
				}
			}
		}
	}

	// unset: used but never measured
	const usedWork = new Set<string>([
		...(i.used?.work ?? []).map((r) => canonicalRegister(r)!),
		...(i.setups ?? []).flatMap((s) => s.fixtures.map((f) => canonicalRegister(f.register)!))
	]);
	const usedTools = new Set<string>([
		...(i.used?.tools ?? []).map((h) => canonicalH(h)!),
		...(i.setups ?? []).flatMap((s) => (s.tools ?? []).map((t) => canonicalH(t.h)!))
	]);
	const unmeasuredWork = new Set((i.unmeasured?.work ?? []).map((r) => canonicalRegister(r)!));
	const unmeasuredTools = new Set((i.unmeasured?.tools ?? []).map((h) => canonicalH(h)!));
	// A zero is what a control shows for an offset never set. It is impossible for every tool
	// except the master (master-tool) and for work offsets that contain R.
	const zeroImpossibleWork = convention !== 'reference-touch';
	for (const r of usedWork) {
		const w = table.work[r];
		const why =
			w === undefined
				? 'has no value in the table'
				: unmeasuredWork.has(r)
					? 'has never been measured'
					: zeroImpossibleWork && toMicro(w) === 0
						? `reads ${fmt(0)}, which in the ${convention} convention means it was never set`
						: null;
		if (why)
			findings.push(
				makeFinding(
					'unset',
					'stop',
					{ type: 'fixture', register: r },
					`${r} is used but ${why}. Measure it before running.`
				)
			);
	}
	for (const h of usedTools) {
		const v = table.tools[h];
		const isMaster = convention === 'master-tool' && h === master;
		const why =
			v === undefined && !isMaster
				? 'has no value in the table'
				: unmeasuredTools.has(h)
					? 'has never been measured'
					: v !== undefined && !isMaster && toMicro(v) === 0
						? `reads ${fmt(0)}, which for this tool means it was never set`
						: null;
		if (why)
			findings.push(
				makeFinding(
					'unset',
					'stop',
					{ type: 'tool', h },
					`H${h} is used but ${why}. Touch it off before running.`
				)
			);
	}

	// history: slips, jumps, age, reference
	const now = toMillis(i.now);
	const referenceEstablishedAt =
		i.referenceEstablishedAt === undefined ? undefined : toMillis(i.referenceEstablishedAt);
	const dependence = REFERENCE_DEPENDENCE[convention];
	const historyFor = (
		records: Record<string, HistoryEntry[]> | undefined,
		canon: (k: string) => string | null
	) => {
		const map = new Map<string, HistoryEntry[]>();
		for (const [k, entries] of Object.entries(records ?? {})) {
			const c = canon(k);
			if (c !== null) map.set(c, [...(map.get(c) ?? []), ...entries]);
		}
		return map;
	};
	const workHistory = historyFor(i.history?.work, canonicalRegister);
	const toolHistory = historyFor(i.history?.tools, canonicalH);
	for (const [section, values, history] of [
		['work', table.work, workHistory],
		['tools', table.tools, toolHistory]
	] as const) {
		for (const [key, current] of Object.entries(values)) {
			const entries = history.get(key);
			if (!entries?.length) continue;
			findings.push(
				...checkRegisterHistory({
					subject:
						section === 'work' ? { type: 'fixture', register: key } : { type: 'tool', h: key },
					label: section === 'work' ? key : `H${key}`,
					section,
					current,
					history: entries,
					units,
					resolution,
					policy,
					now,
					referenceEstablishedAt,
					dependsOnReference:
						section === 'work'
							? dependence.machineShift.work || dependence.surfaceMoved.work
							: dependence.machineShift.tools || dependence.surfaceMoved.tools
				})
			);
		}
	}
	// One finding per key: the first found wins (e.g. a value past travel is not also a sign).
	const seen = new Set<string>();
	return sortFindings(findings.filter((f) => (seen.has(f.key) ? false : (seen.add(f.key), true))));
}
