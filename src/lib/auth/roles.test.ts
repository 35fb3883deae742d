import { describe, expect, test } from 'vitest';
import { ACCESS, isRole, mayUse, ROLES, type Area, type Role } from './roles';

// The expected matrix is the product's documented role table (README, "Who may do what"),
// written out here by hand so that a change to ACCESS must be a deliberate change to both.
const documented: [Area, Role[]][] = [
	['floor', ['admin', 'engineer', 'operator']],
	['lots', ['admin', 'engineer', 'operator']],
	['lots.disposition', ['admin', 'engineer']],
	['stations.manage', ['admin']],
	['charts', ['admin', 'engineer']],
	['charts.manage', ['admin', 'engineer']],
	['alarms.acknowledge', ['admin', 'engineer', 'operator']],
	['alarms.close', ['admin', 'engineer']],
	['products.manage', ['admin', 'engineer']],
	['admin', ['admin']]
];

describe('role matrix', () => {
	test.each(documented)('%s is open to exactly %j', (area, roles) => {
		for (const role of ROLES) expect(mayUse(role, area)).toBe(roles.includes(role));
	});
	test('every area names at least the admin', () => {
		for (const roles of Object.values(ACCESS)) expect(roles).toContain('admin');
	});
	test.each([
		['admin', true],
		['operator', true],
		['Admin', false],
		['', false],
		[null, false],
		[3, false]
	])('isRole(%j) is %s', (value, ok) => {
		expect(isRole(value)).toBe(ok);
	});
});
