// People, sign-in, rate limiting, the audit trail, and the setting-up tables (lines, products,
// versioned spec plans, stations, lots). Raw SQL: the constraints and indexes are PostgreSQL's own.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE TABLE users (
			id bigserial PRIMARY KEY,
			email text NOT NULL,
			name text NOT NULL,
			role text NOT NULL CHECK (role IN ('admin', 'engineer', 'operator')),
			password_hash text NOT NULL,
			active boolean NOT NULL DEFAULT true,
			created_at timestamptz NOT NULL DEFAULT now(),
			password_changed_at timestamptz NOT NULL DEFAULT now()
		);
		CREATE UNIQUE INDEX users_email_key ON users (lower(email));

		-- A session row per sign-in; the cookie carries a signed token whose random id is stored
		-- here only as a SHA-256 hash, so a database leak does not leak live sessions.
		CREATE TABLE sessions (
			id bigserial PRIMARY KEY,
			user_id bigint NOT NULL REFERENCES users (id) ON DELETE CASCADE,
			token_hash text NOT NULL UNIQUE,
			created_at timestamptz NOT NULL DEFAULT now(),
			expires_at timestamptz NOT NULL,
			client_address text
		);
		CREATE INDEX sessions_user_idx ON sessions (user_id);

		-- Fixed-window counters shared by every app instance (sign-in attempts, station posts).
		CREATE TABLE rate_limits (
			key text PRIMARY KEY,
			window_start timestamptz NOT NULL,
			count integer NOT NULL
		);

		CREATE TABLE audit_entries (
			id bigserial PRIMARY KEY,
			at timestamptz NOT NULL DEFAULT now(),
			actor_user_id bigint REFERENCES users (id),
			actor text NOT NULL,
			entity text NOT NULL,
			entity_id text NOT NULL,
			action text NOT NULL,
			before jsonb,
			after jsonb
		);
		CREATE INDEX audit_entries_entity_idx ON audit_entries (entity, entity_id, at);
		CREATE INDEX audit_entries_at_idx ON audit_entries (at);
		-- The trail is append-only: the app has no way to edit or delete an entry.
		CREATE FUNCTION audit_entries_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
		BEGIN RAISE EXCEPTION 'audit entries cannot be changed or deleted'; END $$;
		CREATE TRIGGER audit_entries_no_change BEFORE UPDATE OR DELETE ON audit_entries
			FOR EACH ROW EXECUTE FUNCTION audit_entries_immutable();

		CREATE TABLE lines (
			id bigserial PRIMARY KEY,
			name text NOT NULL UNIQUE,
			description text NOT NULL DEFAULT ''
		);

		CREATE TABLE products (
			id bigserial PRIMARY KEY,
			code text NOT NULL UNIQUE,
			name text NOT NULL,
			family text NOT NULL DEFAULT '',
			created_at timestamptz NOT NULL DEFAULT now(),
			active boolean NOT NULL DEFAULT true
		);

		-- Every change to a plan is a new version; a part is judged by the version in force.
		CREATE TABLE plan_versions (
			id bigserial PRIMARY KEY,
			product_id bigint NOT NULL REFERENCES products (id),
			version integer NOT NULL,
			plan jsonb NOT NULL,
			note text NOT NULL DEFAULT '',
			created_at timestamptz NOT NULL DEFAULT now(),
			created_by bigint REFERENCES users (id),
			UNIQUE (product_id, version)
		);

		CREATE TABLE stations (
			id bigserial PRIMARY KEY,
			name text NOT NULL UNIQUE,
			line_id bigint REFERENCES lines (id),
			inductance_h double precision NOT NULL CHECK (inductance_h > 0),
			stray_f double precision NOT NULL CHECK (stray_f >= 0),
			blocking_f double precision CHECK (blocking_f IS NULL OR blocking_f > 0),
			arrangement text NOT NULL CHECK (arrangement IN ('single', 'parallel2', 'antiseries2')),
			cal_validity_hours double precision NOT NULL DEFAULT 8,
			cal_max_residual_ppm double precision NOT NULL DEFAULT 200,
			cal_max_inductance_change_pct double precision NOT NULL DEFAULT 1,
			cal_max_stray_change_f double precision NOT NULL DEFAULT 2e-12,
			token_hash text UNIQUE,
			token_hint text,
			token_issued_at timestamptz,
			active boolean NOT NULL DEFAULT true,
			created_at timestamptz NOT NULL DEFAULT now(),
			last_seen_at timestamptz
		);

		CREATE TABLE lots (
			id bigserial PRIMARY KEY,
			number text NOT NULL UNIQUE,
			product_id bigint NOT NULL REFERENCES products (id),
			quantity integer NOT NULL CHECK (quantity > 0),
			status text NOT NULL DEFAULT 'open' CHECK (status IN ('open', 'closed')),
			disposition text NOT NULL DEFAULT 'pending' CHECK (disposition IN ('pending', 'held', 'released')),
			opened_at timestamptz NOT NULL DEFAULT now(),
			closed_at timestamptz,
			opened_by bigint REFERENCES users (id)
		);
		CREATE INDEX lots_product_idx ON lots (product_id, opened_at);

		-- Demo scenario marker and other one-off facts of this database.
		CREATE TABLE meta (
			key text PRIMARY KEY,
			value jsonb NOT NULL
		);
	`);
};
