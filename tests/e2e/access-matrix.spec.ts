import { readdirSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { expect, test, type APIRequestContext } from '@playwright/test';
import { FERNHILL, QUARRY, signedInClient } from './helpers';

/**
 * Every route in src/routes, signed in as each role of Fernhill Precision and as a member of
 * Quarry Road Tool. Expectations are written out here from DESIGN.md §6, not derived from the
 * app's own permission table, so a wrong grant in the app fails this test. A route that is
 * added without a line here fails the "every route is covered" check.
 */
type Who = 'owner' | 'admin' | 'lead' | 'operator' | 'outsider';
const ROLES: Who[] = ['owner', 'admin', 'lead', 'operator'];
const ALL: Who[] = ROLES;

interface ShopRoute {
	/** Roles of the shop that may use it; everyone else in the shop gets 403, outsiders 404. */
	allowed: Who[];
	/** Form actions on the page (POST ?/name; 'default' posts to the page itself). */
	actions?: string[];
	/** Roles allowed to use the actions, when fewer than those who may read the page. */
	actionsAllowed?: Who[];
	/** What an allowed role's GET answers when not 200 (e.g. 404 for an unknown token). */
	okStatus?: number;
}

/** Routes under a shop: the matrix applies. */
const SHOP_ROUTES: Record<string, ShopRoute> = {
	'/shops/[shop]': { allowed: ALL },
	'/shops/[shop]/members': {
		allowed: ['owner', 'admin'],
		actions: ['invite', 'changeRole', 'remove', 'resend', 'revoke']
	},
	'/shops/[shop]/audit': { allowed: ['owner', 'admin'] },
	'/shops/[shop]/billing': {
		allowed: ['owner', 'admin'],
		actions: ['choosePlan', 'manageBilling']
	},
	'/api/v1/shops/[shop]/machines': { allowed: ALL },
	'/shops/[shop]/machines/new': { allowed: ['owner', 'admin', 'lead'], actions: ['default'] },
	'/shops/[shop]/machines/[machine]': { allowed: ALL },
	'/shops/[shop]/machines/[machine]/edit': {
		allowed: ['owner', 'admin', 'lead'],
		actions: ['save', 'photo']
	},
	// Mill 1's photo is uploaded by the lead in beforeAll below, so there is one to read.
	'/shops/[shop]/machines/[machine]/photo': { allowed: ALL },
	'/shops/[shop]/machines/[machine]/tools': {
		allowed: ALL,
		// Reading the rack is for everyone; changing it is lead and up.
		actions: ['add', 'archive', 'preview', 'import'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/shops/[shop]/machines/[machine]/tools/export': { allowed: ALL },
	'/shops/[shop]/machines/[machine]/fixtures': {
		allowed: ALL,
		actions: ['add', 'archive'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/shops/[shop]/machines/[machine]/convention': {
		allowed: ['owner', 'admin', 'lead'],
		actions: ['preview', 'convert']
	},
	// Setups: every role plans and runs them (DESIGN.md §6 "setups, readings, program checks").
	'/shops/[shop]/setups': { allowed: ALL },
	'/shops/[shop]/setups/new': { allowed: ALL, actions: ['create'] },
	'/shops/[shop]/setups/[setup]': {
		allowed: ALL,
		actions: ['save', 'status', 'signoff', 'copy', 'uploadPhoto', 'removePhoto']
	},
	'/shops/[shop]/setups/[setup]/sheet': { allowed: ALL },
	'/shops/[shop]/setups/[setup]/photos': { allowed: ALL },
	'/shops/[shop]/setups/[setup]/load-program': { allowed: ALL },
	// Program checks: every role uploads and reads them (DESIGN.md §6).
	'/shops/[shop]/setups/[setup]/programs': { allowed: ALL, actions: ['upload'] },
	'/shops/[shop]/setups/[setup]/programs/[program]': {
		allowed: ALL,
		actions: ['upload', 'runNow', 'recheck']
	},
	'/shops/[shop]/setups/[setup]/programs/[program]/text': { allowed: ALL },
	'/shops/[shop]/setups/[setup]/programs/[program]/report': { allowed: ALL },
	'/api/v1/shops/[shop]/setups/[setup]/programs': { allowed: ALL },
	'/api/v1/shops/[shop]/setups/[setup]/programs/[program]': { allowed: ALL },
	'/api/v1/shops/[shop]/setups/[setup]/programs/[program]/checks/[check]': { allowed: ALL },
	'/shops/[shop]/machines/[machine]/load-program': { allowed: ALL },
	// Readings: every role records them; re-establishing the reference is lead and up.
	'/shops/[shop]/machines/[machine]/readings/tool/[tool]': {
		allowed: ALL,
		actions: ['preview', 'save']
	},
	'/shops/[shop]/machines/[machine]/readings/part-top/[fixture]': {
		allowed: ALL,
		actions: ['preview', 'save']
	},
	'/shops/[shop]/machines/[machine]/reference': {
		allowed: ['owner', 'admin', 'lead'],
		actions: ['preview', 'save']
	},
	'/shops/[shop]/machines/[machine]/history/[kind]/[register]': { allowed: ALL },
	// Read-backs at the control: every role records them (like readings) and sees them.
	'/shops/[shop]/machines/[machine]/readback': { allowed: ALL, actions: ['typed', 'file'] },
	'/api/v1/shops/[shop]/machines/[machine]/readbacks': { allowed: ALL },
	// At the machine: label sheet and machine mode, for every member.
	'/shops/[shop]/machines/[machine]/labels': { allowed: ALL },
	'/shops/[shop]/machines/[machine]/machine-mode': { allowed: ALL },
	'/api/v1/shops/[shop]/machines/[machine]/offsets': { allowed: ALL },
	'/api/v1/shops/[shop]/machines/[machine]/readings': { allowed: ALL },
	// Issue 20: X/Y from edge readings for every role; tool registers and wear are lead and up.
	'/shops/[shop]/machines/[machine]/components': {
		allowed: ALL,
		actions: ['edgePreview', 'edgeSave']
	},
	'/api/v1/shops/[shop]/machines/[machine]/components': { allowed: ALL },
	// One component register's history (G54 X, H3 length wear…): every role reads it.
	'/shops/[shop]/machines/[machine]/components/[kind]/[register]/[component]': { allowed: ALL },
	'/api/v1/shops/[shop]/machines/[machine]/components/[kind]/[register]/[component]': {
		allowed: ALL
	},
	'/api/v1/shops/[shop]/setups': { allowed: ALL },
	'/api/v1/shops/[shop]/setups/[setup]': { allowed: ALL },
	// Fleet board and findings: everyone reads; checking, scheduling and acting are lead and up.
	'/shops/[shop]/fleet': {
		allowed: ALL,
		actions: ['checkNow', 'schedule'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/shops/[shop]/findings': {
		allowed: ALL,
		actions: ['acknowledge', 'resolve', 'digest'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/api/v1/shops/[shop]/fleet': { allowed: ALL },
	'/api/v1/shops/[shop]/checks': { allowed: ALL },
	// Settings for owner and admin; ownership, export and deletion for the owner only.
	'/shops/[shop]/settings': { allowed: ['owner', 'admin'], actions: ['default'] },
	'/shops/[shop]/settings/transfer': { allowed: ['owner'], actions: ['default'] },
	'/shops/[shop]/settings/export': { allowed: ['owner'], actions: ['default'] },
	// The e-mailed download link: an unknown token is 404 even for the owner.
	'/shops/[shop]/settings/export/[token]': { allowed: ['owner'], okStatus: 404 },
	'/shops/[shop]/settings/delete': { allowed: ['owner'], actions: ['delete', 'restore'] },
	'/shops/[shop]/audit/export': { allowed: ['owner', 'admin'] },
	// Tool library (issue 20): every member reads it (like tools); changing it is lead and up.
	'/shops/[shop]/tool-library': {
		allowed: ALL,
		actions: ['add'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/shops/[shop]/tool-library/import': {
		allowed: ['owner', 'admin', 'lead'],
		actions: ['mapping', 'preview', 'import']
	},
	'/shops/[shop]/tool-library/[assembly]': {
		allowed: ALL,
		actions: ['measure', 'preview', 'assign'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/api/v1/shops/[shop]/tool-library': { allowed: ALL },
	'/api/v1/shops/[shop]/tool-library/[assembly]': { allowed: ALL },
	'/api/v1/shops/[shop]/tool-library/[assembly]/assignments': { allowed: ALL },
	'/api/v1/shops/[shop]/tool-library/import': { allowed: ALL },
	'/api/v1/shops/[shop]/tool-library/mapping': { allowed: ALL }
};

/** Form actions of pages already listed above, with fewer roles than the page. */
const EXTRA_ACTIONS: Record<string, ShopRoute> = {
	'/shops/[shop]': {
		allowed: ALL,
		actions: ['dismissFirstSteps'],
		actionsAllowed: ['owner', 'admin', 'lead']
	},
	'/shops/[shop]/machines/[machine]/components': {
		allowed: ALL,
		actions: ['cutterRegister', 'register', 'partPreview', 'partAccept'],
		actionsAllowed: ['owner', 'admin', 'lead']
	}
};

/**
 * Real ids from the demo seed for the other route parameters (Fernhill's Mill 1 is machine 1,
 * its T1–T5 are tools 1–5, G54/G55 fixtures 1–2, its setup is setup 1).
 */
const PARAMS: Record<string, string> = {
	'[machine]': '1',
	'[tool]': '2',
	'[fixture]': '1',
	'[setup]': '1',
	// The demo seed's program on the pump-housing setup, and its check.
	'[program]': '1',
	'[check]': '1',
	'[kind]': 'tool',
	'[register]': '2',
	'[component]': 'length-wear',
	'[token]': 'not-a-real-token-0123456789abcdef0123456',
	// The demo seed's first tool-library assembly (issue 20).
	'[assembly]': '1'
};
function fill(id: string, shop: string): string {
	let path = id.replace('[shop]', shop);
	for (const [param, value] of Object.entries(PARAMS)) path = path.replace(param, value);
	return path;
}

/** Routes outside any shop, with what a signed-in member sees. */
const OTHER_ROUTES: Record<string, { path: string; status: number }> = {
	'/': { path: '/', status: 200 },
	'/healthz': { path: '/healthz', status: 200 },
	'/livez': { path: '/livez', status: 200 },
	// Stripe's webhook: POST only, authenticated by its signature (tests/e2e/billing.spec.ts).
	'/api/v1/stripe/webhook': { path: '/api/v1/stripe/webhook', status: 405 },
	'/signin': { path: '/signin', status: 303 },
	'/signup': { path: '/signup', status: 303 },
	// The sign-up e-mail's link: signed in already, it goes to the shop list (creates nothing).
	'/signup/confirm/[token]': { path: '/signup/confirm/not-a-token', status: 303 },
	'/signout': { path: '/signout', status: 303 },
	'/reset': { path: '/reset', status: 200 },
	'/reset/[token]': { path: '/reset/not-a-token', status: 200 },
	'/invitations/[token]': { path: '/invitations/not-a-token', status: 200 },
	'/shops': { path: '/shops', status: 303 },
	'/shops/new': { path: '/shops/new', status: 200 },
	'/dev/mailbox': { path: '/dev/mailbox', status: 200 },
	// Only for someone removed from that shop; a current member gets the plain 404.
	'/access-ended/[slug]': { path: '/access-ended/fernhill-precision', status: 404 }
};

function routeIds(dir = 'src/routes'): string[] {
	const ids = new Set<string>();
	const walk = (d: string) => {
		for (const name of readdirSync(d)) {
			const p = join(d, name);
			if (statSync(p).isDirectory()) walk(p);
			else if (/^\+(page|server)(\.server)?\.(svelte|ts)$/.test(name)) {
				const id =
					'/' +
					relative(dir, d)
						.split('/')
						.filter((s) => s && !/^\(.*\)$/.test(s))
						.join('/');
				ids.add(id);
			}
		}
	};
	walk(dir);
	return [...ids].sort();
}

const clients = new Map<Who, APIRequestContext>();
test.beforeAll(async () => {
	for (const role of ROLES)
		clients.set(role, await signedInClient(FERNHILL[role as keyof typeof FERNHILL]));
	clients.set('outsider', await signedInClient(QUARRY.owner));
	// A real (tiny) PNG as Mill 1's photo, through the lead's own upload action.
	const png = Buffer.from(
		'iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNk+M9QDwADhgGAWjR9awAAAABJRU5ErkJggg==',
		'base64'
	);
	const up = await clients.get('lead')!.post(`/shops/${FERNHILL.slug}/machines/1/edit?/photo`, {
		multipart: { photo: { name: 'mill-1.png', mimeType: 'image/png', buffer: png } },
		headers: { accept: 'text/html' },
		maxRedirects: 0
	});
	expect(up.status(), 'photo upload').toBe(303);
});
test.afterAll(async () => {
	for (const c of clients.values()) await c.dispose();
});

test('every route in src/routes has a line in the access matrix', () => {
	const covered = new Set([...Object.keys(SHOP_ROUTES), ...Object.keys(OTHER_ROUTES)]);
	const missing = routeIds().filter((id) => !covered.has(id));
	expect(missing, 'routes without an access-matrix line').toEqual([]);
});

for (const [id, rule] of [
	...Object.entries(SHOP_ROUTES),
	...Object.entries(EXTRA_ACTIONS).map(([k, v]) => [`${k} `, v] as const)
]) {
	const path = fill(id.trim(), FERNHILL.slug);
	test(`matrix: GET ${id}`, async () => {
		for (const who of [...ROLES, 'outsider'] as Who[]) {
			const res = await clients.get(who)!.get(path, { maxRedirects: 0 });
			const expected =
				who === 'outsider' ? 404 : rule.allowed.includes(who) ? (rule.okStatus ?? 200) : 403;
			expect(res.status(), `${who} GET ${path}`).toBe(expected);
		}
	});
	for (const action of rule.actions ?? []) {
		test(`matrix: POST ${id}?/${action}`, async () => {
			for (const who of [...ROLES, 'outsider'] as Who[]) {
				// An empty body: allowed roles get a validation answer (400), never a change.
				const url = action === 'default' ? path : `${path}?/${action}`;
				const res = await clients.get(who)!.post(url, {
					form: {},
					headers: { accept: 'application/json' },
					maxRedirects: 0
				});
				const body = await res.json().catch(() => ({}));
				const status = body.status ?? res.status();
				if (who === 'outsider') expect(status, `${who} ${action}`).toBe(404);
				else if ((rule.actionsAllowed ?? rule.allowed).includes(who))
					expect(status, `${who} ${action}`).toBe(400);
				else expect(status, `${who} ${action}`).toBe(403);
			}
		});
	}
}

test('a member of Fernhill gets 404 for every Quarry Road URL and API', async () => {
	const ada = clients.get('owner')!;
	for (const id of Object.keys(SHOP_ROUTES)) {
		const res = await ada.get(fill(id, QUARRY.slug), { maxRedirects: 0 });
		expect(res.status(), id).toBe(404);
	}
});

test('signed-out visitors are sent to sign in (pages) or get 401 (API)', async ({ request }) => {
	for (const id of Object.keys(SHOP_ROUTES)) {
		const res = await request.get(fill(id, FERNHILL.slug), { maxRedirects: 0 });
		if (id.startsWith('/api/')) expect(res.status(), id).toBe(401);
		else {
			expect(res.status(), id).toBe(303);
			expect(res.headers()['location']).toMatch(/^\/signin\?next=/);
		}
	}
});

test('routes outside a shop answer as expected for a signed-in member', async () => {
	const omar = clients.get('operator')!;
	for (const [id, { path, status }] of Object.entries(OTHER_ROUTES)) {
		const res = await omar.get(path, { maxRedirects: 0 });
		expect(res.status(), id).toBe(status);
	}
});

test('queued readings (POST to the readings API): every role may send, outsiders 404, signed out 401', async ({
	request
}) => {
	const path = `/api/v1/shops/${FERNHILL.slug}/machines/1/readings`;
	for (const who of [...ROLES, 'outsider'] as Who[]) {
		// A body that is not a reading: members get the refusal (400), nothing is recorded.
		const res = await clients.get(who)!.post(path, { data: { kind: 'tool' } });
		expect(res.status(), `${who} POST ${path}`).toBe(who === 'outsider' ? 404 : 400);
	}
	const anon = await request.post(path, { data: { kind: 'tool' } });
	expect(anon.status()).toBe(401);
});
