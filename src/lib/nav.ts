import { mayUse, type Area, type Role } from '$lib/auth/roles';

export type NavItem = { href: string; label: string; area: Area; hint: string };

/** The product's areas in navigation order. */
export const NAV: readonly NavItem[] = [
	{ href: '/floor', label: 'Floor', area: 'floor', hint: 'Live state of every station' },
	{ href: '/lots', label: 'Lots', area: 'lots', hint: 'Yield, bins and disposition per lot' },
	{ href: '/stations', label: 'Stations', area: 'stations', hint: 'Fixtures, calibrations and tokens' },
	{ href: '/charts', label: 'Charts', area: 'charts', hint: 'Control charts by characteristic' },
	{ href: '/uploads', label: 'Uploads', area: 'uploads', hint: 'Bench C–V files into a lot' },
	{ href: '/alarms', label: 'Alarms', area: 'alarms', hint: 'Rule violations to act on' },
	{ href: '/products', label: 'Products', area: 'products', hint: 'Parts and their spec plans' },
	{ href: '/studies', label: 'Studies', area: 'studies', hint: 'Gauge studies and station correlation' },
	{ href: '/audit', label: 'Audit', area: 'audit', hint: 'Every recorded change: who, when, before and after' },
	{ href: '/admin', label: 'Admin', area: 'admin', hint: 'People and roles' }
];

/** The navigation a role may use. */
export function navFor(role: Role): NavItem[] {
	return NAV.filter((n) => mayUse(role, n.area));
}
