import { describe, expect, test } from 'vitest';
import { AlarmsPageQuery, ChartsPageQuery, CloseAlarmForm, recomputeInput } from './charts-ui';

describe('chart and alarm screen input', () => {
	test('odd query values fall back instead of failing the page', () => {
		expect(ChartsPageQuery.parse({ view: 'pie', chart: 'x', kind: 'other' })).toEqual({ view: 'imr', chart: undefined, kind: undefined });
		expect(ChartsPageQuery.parse({ view: 'ewma', chart: '12' })).toMatchObject({ view: 'ewma', chart: 12 });
		expect(AlarmsPageQuery.parse({}).status).toBe('active');
		expect(AlarmsPageQuery.parse({ status: 'all' }).status).toBe('all');
	});

	test('closing needs both cause and action', () => {
		const r = CloseAlarmForm.safeParse({ alarmId: '3', cause: ' ', action: '' });
		expect(r.success).toBe(false);
		expect(r.error?.issues.map((i) => i.path.join('.')).sort()).toEqual(['action', 'cause']);
	});

	test('recompute: inclusive last point becomes the exclusive toSeq; blank rows are dropped, errors map to their row', () => {
		const ok = recomputeInput({ fromSeq: '0', lastSeq: '11', reason: 'Shifted run', 'exclusions.0.seq': '', 'exclusions.0.reason': '', 'exclusions.2.seq': '10', 'exclusions.2.reason': 'Bad socket' });
		expect(ok.parsed.success && ok.parsed.data).toEqual({ fromSeq: 0, toSeq: 12, exclusions: [{ seq: 10, reason: 'Bad socket' }], reason: 'Shifted run' });
		expect(ok.rowOf).toEqual([2]);
		const bad = recomputeInput({ fromSeq: '', lastSeq: '5', reason: '', 'exclusions.4.seq': '3', 'exclusions.4.reason': '' });
		expect(bad.parsed.success).toBe(false);
		expect(bad.rowOf).toEqual([4]);
		expect(bad.parsed.error?.issues.map((i) => i.path.join('.')).sort()).toEqual(['exclusions.0.reason', 'fromSeq', 'reason']);
	});

	test('a range of one point is refused beside the last point', () => {
		const r = recomputeInput({ fromSeq: '4', lastSeq: '4', reason: 'Why not' });
		expect(r.parsed.error?.issues[0]?.path).toEqual(['lastSeq']);
	});
});
