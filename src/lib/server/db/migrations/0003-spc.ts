// Control charts per station × product × kind × characteristic, their points, versioned limits,
// and alarms (one open alarm per chart and rule, enforced by a partial unique index).
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE TABLE charts (
			id bigserial PRIMARY KEY,
			station_id bigint NOT NULL REFERENCES stations (id),
			product_id bigint NOT NULL REFERENCES products (id),
			kind text NOT NULL CHECK (kind IN ('production', 'reference')),
			characteristic text NOT NULL,
			unit text NOT NULL DEFAULT '',
			status text NOT NULL DEFAULT 'baseline' CHECK (status IN ('baseline', 'active')),
			point_count integer NOT NULL DEFAULT 0,
			limits jsonb,
			limits_version integer NOT NULL DEFAULT 0,
			rule_state jsonb,
			UNIQUE (station_id, product_id, kind, characteristic)
		);

		-- The charted values in order; a chart never scans the units table.
		CREATE TABLE chart_points (
			chart_id bigint NOT NULL REFERENCES charts (id),
			seq integer NOT NULL,
			unit_id bigint NOT NULL REFERENCES units (id),
			value double precision NOT NULL,
			at timestamptz NOT NULL,
			limits_version integer NOT NULL,
			rules text[] NOT NULL DEFAULT '{}',
			PRIMARY KEY (chart_id, seq)
		);
		CREATE INDEX chart_points_at_idx ON chart_points (chart_id, at);

		-- Every set of limits a chart had: the frozen baseline, then each recomputation.
		CREATE TABLE chart_limits (
			chart_id bigint NOT NULL REFERENCES charts (id),
			version integer NOT NULL,
			limits jsonb NOT NULL,
			from_seq integer NOT NULL,
			to_seq integer NOT NULL,
			exclusions jsonb NOT NULL DEFAULT '[]',
			reason text NOT NULL DEFAULT '',
			created_at timestamptz NOT NULL DEFAULT now(),
			created_by bigint REFERENCES users (id),
			PRIMARY KEY (chart_id, version)
		);

		CREATE TABLE alarms (
			id bigserial PRIMARY KEY,
			chart_id bigint NOT NULL REFERENCES charts (id),
			rule text NOT NULL,
			description text NOT NULL,
			status text NOT NULL DEFAULT 'open' CHECK (status IN ('open', 'acknowledged', 'closed')),
			opened_at timestamptz NOT NULL DEFAULT now(),
			first_seq integer NOT NULL,
			last_seq integer NOT NULL,
			last_at timestamptz NOT NULL DEFAULT now(),
			occurrences integer NOT NULL DEFAULT 1,
			unit_id bigint REFERENCES units (id),
			lot_id bigint REFERENCES lots (id),
			suspect text CHECK (suspect IN ('tester', 'product', 'lot')),
			reasoning text NOT NULL DEFAULT '',
			acknowledged_at timestamptz,
			acknowledged_by bigint REFERENCES users (id),
			closed_at timestamptz,
			closed_by bigint REFERENCES users (id),
			cause text,
			action text
		);
		CREATE UNIQUE INDEX alarms_one_open_per_rule ON alarms (chart_id, rule) WHERE status <> 'closed';
		CREATE INDEX alarms_status_idx ON alarms (status, opened_at DESC);
		CREATE INDEX alarms_lot_idx ON alarms (lot_id, opened_at DESC);
	`);
};
