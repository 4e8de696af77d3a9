/**
 * The demo scenario of DESIGN.md §9 — invented, every name and number. "Fernhill Precision"
 * runs four mills; "Quarry Road Tool" exists to prove that shops never see each other.
 *
 * Readings are raw machine-coordinate Z values (negative: Z homes at the top of travel,
 * common shop practice) of the spindle gauge line with the tool tip on the reference surface,
 * sometimes through a gauge block (`block`), which the offset maths subtracts.
 */
export const DEMO_PASSWORD = 'datumkeep-demo';

export type Role = 'owner' | 'admin' | 'lead' | 'operator';

export interface DemoPerson {
	name: string;
	email: string;
	role: Role;
}

export interface DemoTool {
	t: number;
	h: number;
	description: string;
	holder: string;
	stickout: number;
	/** Touch-offs, oldest first: days ago, raw machine Z, block height under the tip. */
	touches: { daysAgo: number; z: number; block?: number; toolChanged?: boolean; reason?: string }[];
	/** Parts measured after this tool cut them, oldest first: the wear each one called for. */
	wearFromPart?: {
		daysAgo: number;
		feature: 'depth' | 'outside' | 'inside';
		nominal: number;
		measured: number;
		note: string;
	}[];
}

export interface DemoFixture {
	register: string;
	name: string;
	description: string;
	/** Part-top touch: days ago, raw machine Z, and which tool (T) touched it. */
	partTop: { daysAgo: number; z: number; withTool: number };
	/** X/Y edge readings (issue 20): one edge, or two opposite edges for a centre. */
	edges?: {
		daysAgo: number;
		axis: 'X' | 'Y';
		probe: number;
		instrument: string;
		first: [number, 'minus' | 'plus'];
		second?: [number, 'minus' | 'plus'];
		feature?: 'outside' | 'inside';
	}[];
}

export interface DemoMachine {
	name: string;
	units: 'inch' | 'mm';
	zTravel: number;
	resolution: number;
	controlStyle: 'rs274ngc' | 'iso';
	convention: 'reference-touch' | 'gauge-length';
	notes: string;
	references: {
		daysAgo: number;
		instrument: '1-2-3 block' | 'gauge block' | 'tool setter' | 'other';
		height: number;
		location: string;
		gaugeLineZ?: number;
		note: string;
	}[];
	fixtures: DemoFixture[];
	tools: DemoTool[];
	setups: {
		name: string;
		job: string;
		status: 'planned' | 'on-machine' | 'proven' | 'closed';
		margin: number;
		fixtures: { register: string; obstacle: number }[];
		tools: number[];
		ops: { name: string; register: string }[];
		/** G-code programs uploaded to the setup and checked against it (program check). */
		programs?: { name: string; fileName: string; lines: string[] }[];
	}[];
	/** Read-backs at the control, oldest first: a saved file, or values typed from the screen. */
	readbacks?: {
		hoursAgo: number;
		note: string;
		file?: { name: string; lines: string[] };
		typed?: { work?: Record<string, string>; tools?: Record<string, string> };
	}[];
}

/** A tool-library assembly measured on the presetter (issue 20) and the pockets it is put in. */
export interface DemoAssembly {
	name: string;
	holder: string;
	cutter: string;
	stickOut: number;
	units: 'inch' | 'mm';
	gaugeLength: number;
	radius: number;
	presetter: string;
	daysAgo: number;
	/** Put in these pockets in this order, each when it happened; a later one ends the earlier. */
	pockets: { machine: string; t: number; daysAgo: number }[];
}

export interface DemoShop {
	name: string;
	slug: string;
	timeZone: string;
	people: DemoPerson[];
	machines: DemoMachine[];
	assemblies?: DemoAssembly[];
}

export const demoShops: DemoShop[] = [
	{
		name: 'Fernhill Precision',
		slug: 'fernhill-precision',
		timeZone: 'America/Chicago',
		people: [
			{ name: 'Ada Brennan', email: 'ada@fernhill.example', role: 'owner' },
			{ name: 'Tomas Reyes', email: 'tomas@fernhill.example', role: 'admin' },
			{ name: 'Keiko Hart', email: 'keiko@fernhill.example', role: 'lead' },
			{ name: 'Omar Lindqvist', email: 'omar@fernhill.example', role: 'operator' },
			{ name: 'Bea Novak', email: 'bea@fernhill.example', role: 'operator' }
		],
		machines: [
			{
				name: 'Mill 1',
				units: 'inch',
				zTravel: 20,
				resolution: 0.0001,
				controlStyle: 'iso',
				convention: 'reference-touch',
				notes: 'Pump housing cell. Reference block lives at the front-left corner of the table.',
				references: [
					{
						daysAgo: 41,
						instrument: '1-2-3 block',
						height: 3,
						location: 'Table front-left, bolted down',
						gaugeLineZ: -19.965,
						note: 'Set after the table was re-trammed.'
					}
				],
				fixtures: [
					{
						register: 'G54',
						name: 'Op A — 6 in vise',
						description: 'Pump housing rough stock in soft jaws',
						partTop: { daysAgo: 2, z: -13.0296, withTool: 1 },
						// Fixed jaw and left end of the stock, 0.2 in edge finder: edge = reading + 0.1.
						edges: [
							{
								daysAgo: 2,
								axis: 'X',
								probe: 0.2,
								instrument: '0.200 in edge finder',
								first: [-12.4, 'minus']
							},
							{
								daysAgo: 2,
								axis: 'Y',
								probe: 0.2,
								instrument: '0.200 in edge finder',
								first: [-7.2, 'minus']
							}
						]
					},
					{
						register: 'G55',
						name: 'Op B — fixture plate',
						description: 'Pump housing flipped, located on two dowels',
						partTop: { daysAgo: 2, z: -14.7791, withTool: 1 },
						// Centre of the plate's locating bore, probed from inside on both walls.
						edges: [
							{
								daysAgo: 2,
								axis: 'X',
								probe: 0.2,
								instrument: '0.200 in edge finder',
								feature: 'inside',
								first: [-5.4, 'plus'],
								second: [-4.1, 'minus']
							},
							{
								daysAgo: 2,
								axis: 'Y',
								probe: 0.2,
								instrument: '0.200 in edge finder',
								feature: 'inside',
								first: [-8.3, 'plus'],
								second: [-7, 'minus']
							}
						]
					}
				],
				tools: [
					{
						t: 1,
						h: 1,
						description: '3.0 in face mill',
						holder: 'CAT40 shell mill arbor',
						stickout: 1.75,
						touches: [{ daysAgo: 12, z: -15.8421 }]
					},
					{
						t: 2,
						h: 2,
						description: '1/2 in 3-flute end mill',
						holder: 'CAT40 shrink fit',
						stickout: 1.375,
						touches: [
							{ daysAgo: 20, z: -14.6215 },
							{
								daysAgo: 3,
								z: -14.7502,
								toolChanged: true,
								reason: 'End mill chipped on op A; replaced with a new one.'
							}
						]
					},
					{
						t: 3,
						h: 3,
						description: '#7 jobber drill',
						holder: 'CAT40 ER32 collet',
						stickout: 3.25,
						touches: [{ daysAgo: 12, z: -13.8877, block: 0.1 }],
						wearFromPart: [
							{
								daysAgo: 1,
								feature: 'depth',
								nominal: 0.75,
								measured: 0.748,
								note: 'Op A relief pocket measured 0.002 in shallow on part 12.'
							}
						]
					},
					{
						t: 4,
						h: 4,
						description: '1/4-20 spiral point tap',
						holder: 'CAT40 tapping head',
						stickout: 2.5,
						touches: [{ daysAgo: 12, z: -14.3104 }]
					},
					{
						t: 5,
						h: 5,
						description: '3/8 in 90° spot drill',
						holder: 'CAT40 ER32 collet',
						stickout: 1.5,
						touches: [{ daysAgo: 12, z: -15.1029 }]
					},
					{
						// A spare in the rack, not used by the pump housing job: last touched off five
						// weeks ago, so the checks flag it as past the shop's age limit for tools.
						t: 6,
						h: 6,
						description: '1/8 in ball end mill (spare)',
						holder: 'CAT40 ER16 collet',
						stickout: 1.25,
						touches: [{ daysAgo: 37, z: -15.3318 }]
					}
				],
				setups: [
					{
						name: 'Pump housing, ops A and B',
						job: 'Job 4471 — pump housing PH-220, 40 pcs',
						status: 'on-machine',
						margin: 0.5,
						fixtures: [
							{ register: 'G54', obstacle: 3.125 },
							{ register: 'G55', obstacle: 1.875 }
						],
						tools: [1, 2, 3, 4, 5],
						ops: [
							{ name: 'Op A — face, pocket, drill', register: 'G54' },
							{ name: 'Op B — back face and tap', register: 'G55' }
						],
						programs: [
							{
								name: 'O4471 face both ops',
								fileName: 'O4471.nc',
								// Clean: retracts to Z 1.0 in G54 (tip 3.8125 in above the reference, over the
								// 3.625 in clearance height) before moving over to G55.
								lines: [
									'%',
									'O4471 (PUMP HOUSING PH-220 - FACE OPS A AND B)',
									'G20 G17 G40 G80 G90',
									'T1 M6 (3.0 FACE MILL)',
									'G54 G0 X-2. Y1.',
									'G43 H1 Z1.',
									'Z0.1',
									'G1 Z0. F40.',
									'X6. F60.',
									'G0 Z1.',
									'G55 X-2. Y1.',
									'Z3.',
									'Z0.1',
									'G1 Z0. F40.',
									'X6. F60.',
									'G0 Z3.',
									'G91 G28 Z0.',
									'M30',
									'%'
								]
							}
						]
					}
				],
				readbacks: [
					{
						// The whole table read back from the control's saved file: everything matched.
						hoursAgo: 45,
						note: 'Saved from the control after loading the pump housing offsets.',
						file: {
							name: 'MILL1-OFFSETS.NC',
							lines: [
								'%',
								'O9000 (OFFSET TABLES SAVED AT THE CONTROL)',
								'G20',
								// X/Y as the edge readings above give them (G54 one edge each, G55 a bore centre).
								'G10 L2 P1 X-12.3 Y-7.1 Z2.8125',
								'G10 L2 P2 X-4.75 Y-7.65 Z1.0630',
								'G10 L10 P1 R-15.8421',
								'G10 L10 P2 R-14.7502',
								'G10 L10 P3 R-13.9877',
								'G10 L10 P4 R-14.3104',
								'G10 L10 P5 R-15.1029',
								'G10 L10 P6 R-15.3318',
								'G10 L11 P1 R0.',
								'G10 L11 P2 R0.',
								'%'
							]
						}
					},
					{
						// H4 re-keyed at the control after the tapping head was reseated: two digits swapped.
						hoursAgo: 20,
						note: 'H4 re-entered after reseating the tapping head.',
						typed: { tools: { '4': '-14.3014' } }
					}
				]
			},
			{
				name: 'Mill 2',
				units: 'inch',
				zTravel: 20,
				resolution: 0.0001,
				controlStyle: 'iso',
				convention: 'reference-touch',
				notes: 'Aluminium work. Block was knocked on Monday and re-set.',
				references: [
					{
						daysAgo: 60,
						instrument: '1-2-3 block',
						height: 3,
						location: 'Table rear-right',
						note: 'Original position.'
					},
					{
						daysAgo: 3,
						instrument: '1-2-3 block',
						height: 3,
						location: 'Table rear-right',
						note: 'Block knocked by a chip conveyor hose; re-seated and re-established.'
					}
				],
				fixtures: [
					{
						register: 'G54',
						name: 'Bracket — 6 in vise',
						description: '6061 bracket, 1.5 in above the jaws',
						partTop: { daysAgo: 9, z: -12.4483, withTool: 1 }
					}
				],
				tools: [
					{
						t: 1,
						h: 1,
						description: '1/2 in 2-flute end mill (aluminium)',
						holder: 'CAT40 ER32 collet',
						stickout: 1.25,
						touches: [{ daysAgo: 9, z: -14.2733 }]
					},
					{
						t: 6,
						h: 6,
						description: '1/4 in drill',
						holder: 'CAT40 drill chuck',
						stickout: 2.75,
						touches: [{ daysAgo: 2, z: -13.5018 }]
					}
				],
				setups: [
					{
						name: 'Aluminium bracket',
						job: 'Job 4478 — bracket BR-12, 120 pcs',
						status: 'on-machine',
						margin: 0.5,
						fixtures: [{ register: 'G54', obstacle: 2.25 }],
						tools: [1, 6],
						ops: [{ name: 'Op 1 — profile and drill', register: 'G54' }]
					}
				]
			},
			{
				name: 'Mill 3',
				units: 'mm',
				zTravel: 510,
				resolution: 0.001,
				controlStyle: 'rs274ngc',
				convention: 'gauge-length',
				notes: 'Metric work. Tool lengths measured from the gauge line.',
				references: [
					{
						daysAgo: 25,
						instrument: 'tool setter',
						height: 50,
						location: 'Table left end',
						gaugeLineZ: -402.315,
						note: 'Gauge-line Z found with the 100.000 mm reference bar.'
					}
				],
				fixtures: [
					{
						register: 'G54',
						name: 'Flange — 3-jaw chuck on the table',
						description: 'Flange FL-80, part top about 45 mm above the setter',
						partTop: { daysAgo: 5, z: -244.625, withTool: 1 }
					}
				],
				tools: [
					{
						t: 1,
						h: 1,
						description: '80 mm face mill',
						holder: 'BT40 shell mill arbor',
						stickout: 45,
						touches: [{ daysAgo: 5, z: -289.835 }]
					},
					{
						t: 2,
						h: 2,
						description: '10 mm 4-flute end mill',
						holder: 'BT40 hydraulic chuck',
						stickout: 38,
						touches: [{ daysAgo: 5, z: -271.108 }]
					},
					{
						t: 3,
						h: 3,
						description: '8.5 mm drill',
						holder: 'BT40 ER32 collet',
						stickout: 70,
						touches: [{ daysAgo: 5, z: -255.902 }]
					}
				],
				setups: [
					{
						name: 'Metric flange',
						job: 'Job 4480 — flange FL-80, 25 pcs',
						status: 'planned',
						margin: 12,
						fixtures: [{ register: 'G54', obstacle: 61 }],
						tools: [1, 2, 3],
						ops: [{ name: 'Op 1 — face, bore and drill', register: 'G54' }]
					}
				],
				readbacks: [
					{
						// Saved from the control, with some values written without a decimal point: this
						// RS274NGC-style control reads "Z131207" as 131207 mm, not 131.207 mm.
						hoursAgo: 90,
						note: 'Offsets file from the control after keying in the flange tools.',
						file: {
							name: 'MILL3-OFFSETS.NGC',
							lines: [
								'%',
								'(MILL 3 WORK AND TOOL OFFSETS)',
								'G21 G90',
								'G10 L2 P1 X0 Y0 Z-357.105',
								'G10 L2 P2 X0 Y0 Z0',
								'G10 L1 P1 Z112.480',
								'G10 L1 P2 Z131207',
								'G10 L1 P3 Z146.413',
								'M30',
								'%'
							]
						}
					}
				]
			},
			{
				name: 'Mill 4',
				units: 'inch',
				zTravel: 25,
				resolution: 0.0001,
				controlStyle: 'iso',
				convention: 'reference-touch',
				notes: 'Big-envelope mill; idle between jobs.',
				references: [
					{
						daysAgo: 120,
						instrument: 'gauge block',
						height: 2,
						location: 'Table centre T-slot',
						gaugeLineZ: -22.486,
						note: 'Grade 0 block on a parallel.'
					}
				],
				fixtures: [],
				tools: [
					{
						t: 10,
						h: 10,
						description: '1 in indexable end mill',
						holder: 'CAT50 end mill holder',
						stickout: 3,
						touches: [{ daysAgo: 95, z: -17.6102 }]
					}
				],
				setups: []
			}
		],
		// Measured on the tool-room presetter, shared by Mill 1 and Mill 4 (issue 20): one
		// assembly is in one pocket at a time, so each was tried in one mill, then moved.
		assemblies: [
			{
				name: 'FH-101',
				holder: 'Shrink-fit holder',
				cutter: '3/8 in 4-flute end mill',
				stickOut: 1.25,
				units: 'inch',
				gaugeLength: 4.2875,
				radius: 0.1875,
				presetter: 'Tool-room presetter',
				daysAgo: 3,
				pockets: [
					{ machine: 'Mill 4', t: 11, daysAgo: 2.9 },
					{ machine: 'Mill 1', t: 11, daysAgo: 2.1 }
				]
			},
			{
				name: 'FH-102',
				holder: 'ER32 collet chuck',
				cutter: '#7 jobber drill',
				stickOut: 2.1,
				units: 'inch',
				gaugeLength: 5.041,
				radius: 0.1005,
				presetter: 'Tool-room presetter',
				daysAgo: 3,
				pockets: [
					{ machine: 'Mill 1', t: 12, daysAgo: 2.8 },
					{ machine: 'Mill 4', t: 12, daysAgo: 2.6 }
				]
			}
		]
	},
	{
		name: 'Quarry Road Tool',
		slug: 'quarry-road-tool',
		timeZone: 'America/New_York',
		people: [
			{ name: 'Nils Ferreira', email: 'nils@quarryroad.example', role: 'owner' },
			{ name: 'June Okafor', email: 'june@quarryroad.example', role: 'operator' }
		],
		machines: [
			{
				name: 'VMC A',
				units: 'inch',
				zTravel: 16,
				resolution: 0.0001,
				controlStyle: 'rs274ngc',
				convention: 'reference-touch',
				notes: 'Die shoe work.',
				references: [
					{
						daysAgo: 10,
						instrument: 'tool setter',
						height: 2,
						location: 'Table right end',
						note: 'Electronic setter, 2.0000 in body.'
					}
				],
				fixtures: [
					{
						register: 'G54',
						name: 'Die shoe on parallels',
						description: 'Quarry Road job',
						partTop: { daysAgo: 1, z: -9.2052, withTool: 1 }
					}
				],
				tools: [
					{
						t: 1,
						h: 1,
						description: '3/4 in end mill',
						holder: 'CAT40 end mill holder',
						stickout: 2,
						touches: [{ daysAgo: 1, z: -11.4011 }]
					}
				],
				setups: []
			}
		]
	}
];
