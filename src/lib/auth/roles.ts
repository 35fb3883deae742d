/**
 * Roles and what each may reach: the one table behind navigation and every server guard.
 * Shared by the browser (to show only what a role may use) and the server (to enforce it).
 */
export const ROLES = ['admin', 'engineer', 'operator'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
	admin: 'Administrator',
	engineer: 'Quality engineer',
	operator: 'Line operator'
};

/** The areas of the product; each page and endpoint belongs to one. */
export type Area =
	| 'floor'
	| 'lots'
	| 'lots.manage'
	| 'lots.disposition'
	| 'stations'
	| 'stations.manage'
	| 'charts'
	| 'charts.manage'
	| 'alarms'
	| 'alarms.acknowledge'
	| 'alarms.close'
	| 'products'
	| 'products.manage'
	| 'admin'
	| 'studies'
	| 'studies.manage'
	| 'audit'
	| 'uploads'
	| 'account';

const ALL: readonly Role[] = ROLES;
const ENGINEERS: readonly Role[] = ['admin', 'engineer'];

/** Who may use each area (the role matrix documented in the README). */
export const ACCESS: Record<Area, readonly Role[]> = {
	floor: ALL,
	lots: ALL,
	'lots.manage': ALL,
	'lots.disposition': ENGINEERS,
	stations: ALL,
	'stations.manage': ['admin'],
	charts: ENGINEERS,
	'charts.manage': ENGINEERS,
	alarms: ALL,
	'alarms.acknowledge': ALL,
	'alarms.close': ENGINEERS,
	products: ENGINEERS,
	'products.manage': ENGINEERS,
	admin: ['admin'],
	studies: ENGINEERS,
	'studies.manage': ENGINEERS,
	audit: ENGINEERS,
	account: ALL,
	/** Bench C–V files into a lot (engineers: bench parts count in the lot's yield). */
	uploads: ENGINEERS
};

/** True when the role may use the area. Assumes a role already validated as one of ROLES. */
export function mayUse(role: Role, area: Area): boolean {
	return ACCESS[area].includes(role);
}

export function isRole(value: unknown): value is Role {
	return typeof value === 'string' && (ROLES as readonly string[]).includes(value);
}
