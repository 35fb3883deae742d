import { describe, expect, test } from 'vitest';
import { auditWhere, filterTime } from './audit-views';

describe('audit filters', () => {
	test('a datetime-local value is read as UTC; an explicit zone is kept', () => {
		expect(filterTime('2026-03-02T07:15').toISOString()).toBe('2026-03-02T07:15:00.000Z');
		expect(filterTime('2026-03-02T07:15:00+02:00').toISOString()).toBe('2026-03-02T05:15:00.000Z');
		expect(filterTime('2026-03-02T07:15:00Z').toISOString()).toBe('2026-03-02T07:15:00.000Z');
		expect(filterTime('2026-03-02').toISOString()).toBe('2026-03-02T00:00:00.000Z');
	});
	test('no filter, no WHERE; each given filter adds one clause; LIKE wildcards in the actor match literally', () => {
		expect(auditWhere({})).toEqual({ sql: '', replacements: {} });
		const w = auditWhere({ entity: 'plan', actor: '50%_a\\b', from: '2026-03-01T00:00', to: '2026-03-02T00:00' });
		expect(w.sql).toBe("WHERE entity = :entity AND actor ILIKE :actor ESCAPE '\\' AND at >= :from AND at <= :to");
		expect(w.replacements.actor).toBe('%50\\%\\_a\\\\b%');
		expect((w.replacements.from as Date).toISOString()).toBe('2026-03-01T00:00:00.000Z');
	});
});
