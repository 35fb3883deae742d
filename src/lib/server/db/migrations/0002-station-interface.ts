// Calibrations, tested units, idempotency keys and the station's current lot.
//
// Storage choice for tested units (to stay fast at a million parts and more): one row per tested
// part, with its sweep as parallel float8 arrays (bias, resonance, bandwidth, capacitance, Q)
// rather than a row per point. A part's points are always written and read together; a row per
// part keeps the table and its indexes 8× smaller than a row per point, and a chart of one
// characteristic reads one array element per part. Charted values also go to per-chart series
// (a later migration) so control charts never scan this table. Indexes serve the reads we make:
// a lot's parts in order and by bin, a station's recent parts, and BRIN on tested_at for time
// ranges (tiny, and right for an append-mostly table). Partitioning by month can be added later
// without changing queries; at 1 M parts it is not needed.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		ALTER TABLE stations ADD COLUMN current_lot_id bigint REFERENCES lots (id);

		CREATE TABLE calibrations (
			id bigserial PRIMARY KEY,
			station_id bigint NOT NULL REFERENCES stations (id),
			at timestamptz NOT NULL DEFAULT now(),
			valid_until timestamptz NOT NULL,
			inductance_h double precision NOT NULL,
			stray_f double precision NOT NULL,
			residual_ppm double precision NOT NULL,
			blocking_f double precision,
			references_json jsonb NOT NULL
		);
		CREATE INDEX calibrations_station_idx ON calibrations (station_id, at DESC);

		CREATE TABLE units (
			id bigserial PRIMARY KEY,
			lot_id bigint NOT NULL REFERENCES lots (id),
			station_id bigint REFERENCES stations (id),
			plan_version_id bigint NOT NULL REFERENCES plan_versions (id),
			calibration_id bigint REFERENCES calibrations (id),
			serial text NOT NULL,
			kind text NOT NULL CHECK (kind IN ('production', 'reference', 'bench', 'study')),
			source text NOT NULL DEFAULT 'station',
			tested_at timestamptz NOT NULL,
			received_at timestamptz NOT NULL DEFAULT now(),
			temperature_c double precision,
			leakage_a double precision,
			bin smallint NOT NULL,
			pass boolean NOT NULL,
			bias_v double precision[] NOT NULL,
			resonance_hz double precision[],
			bandwidth_hz double precision[],
			capacitance_f double precision[],
			q double precision[],
			cj0_f double precision,
			vj_v double precision,
			m double precision,
			cp_f double precision,
			fit_rms_pct double precision,
			failures jsonb NOT NULL DEFAULT '[]'
		);
		CREATE INDEX units_lot_idx ON units (lot_id, id);
		CREATE INDEX units_lot_bin_idx ON units (lot_id, bin);
		CREATE INDEX units_station_idx ON units (station_id, id);
		CREATE INDEX units_serial_idx ON units (serial);
		CREATE INDEX units_tested_at_brin ON units USING brin (tested_at);

		-- One row per (station, Idempotency-Key): the request's hash and the answer given.
		CREATE TABLE idempotency_keys (
			station_id bigint NOT NULL REFERENCES stations (id),
			key text NOT NULL,
			request_hash text NOT NULL,
			status integer NOT NULL,
			response jsonb NOT NULL,
			created_at timestamptz NOT NULL DEFAULT now(),
			PRIMARY KEY (station_id, key)
		);
		CREATE INDEX idempotency_keys_created_idx ON idempotency_keys (created_at);
	`);
};
