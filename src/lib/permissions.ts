/**
 * Who may do what in a shop (DESIGN.md §6). Shared by the server guard, which enforces it, and
 * the UI, which only hides what a role may not do.
 */
export const ROLES = ['owner', 'admin', 'lead', 'operator'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	owner: 'Owner',
	admin: 'Admin',
	lead: 'Lead',
	operator: 'Operator'
};

const grants = {
	'shop.read': ['owner', 'admin', 'lead', 'operator'],
	'shop.delete': ['owner'],
	'ownership.transfer': ['owner'],
	billing: ['owner', 'admin'],
	'settings.write': ['owner', 'admin'],
	'shop.export': ['owner'],
	'members.manage': ['owner', 'admin'],
	'audit.read': ['owner', 'admin'],
	'machines.read': ['owner', 'admin', 'lead', 'operator'],
	'machines.write': ['owner', 'admin', 'lead'],
	'setups.write': ['owner', 'admin', 'lead', 'operator'],
	'findings.read': ['owner', 'admin', 'lead', 'operator'],
	'findings.acknowledge': ['owner', 'admin', 'lead']
} as const satisfies Record<string, readonly Role[]>;

export type Capability = keyof typeof grants;

export function can(role: Role | null | undefined, capability: Capability): boolean {
	return !!role && (grants[capability] as readonly Role[]).includes(role);
}

/**
 * What each capability lets a person do, in plain words. The members page's roles explainer is
 * built from this and the table above, so what it says is what the guard enforces.
 */
export const CAPABILITY_LABELS: Record<Capability, string> = {
	'shop.read': 'See the shop: machines, offsets, setups and the fleet board',
	'shop.delete': 'Delete the shop',
	'ownership.transfer': 'Hand ownership to another member',
	billing: 'Choose the plan and manage billing',
	'settings.write': 'Change shop settings (name, time zone, units, check hour, check limits)',
	'shop.export': 'Download all of the shop’s data',
	'members.manage': 'Invite people, change roles and remove members',
	'audit.read': 'Read the audit log',
	'machines.read': 'Read machines, references, tools and fixtures',
	'machines.write': 'Add and edit machines, references, tools and fixtures',
	'setups.write': 'Record readings, work on setups and check programs',
	'findings.read': 'See findings',
	'findings.acknowledge': 'Acknowledge findings'
};

/** "an owner", "an admin", "a lead", "an operator": for sentences in pages and e-mails. */
export function roleWithArticle(role: Role): string {
	const word = ROLE_LABELS[role].toLowerCase();
	return `${/^[aeiou]/.test(word) ? 'an' : 'a'} ${word}`;
}

/** For each role, the capabilities it holds, in the table's order (for the roles explainer). */
export function capabilitiesOf(role: Role): Capability[] {
	return (Object.keys(grants) as Capability[]).filter((c) => can(role, c));
}

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}
