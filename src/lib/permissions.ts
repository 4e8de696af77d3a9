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

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}
