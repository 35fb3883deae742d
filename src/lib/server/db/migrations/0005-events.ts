// The live event log behind /api/v1/stream (ids for Last-Event-ID resume, fan-out to every app
// instance through LISTEN/NOTIFY), and per-lot bin counters so yield never counts the parts table.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE TABLE events (
			id bigserial PRIMARY KEY,
			at timestamptz NOT NULL DEFAULT now(),
			type text NOT NULL CHECK (type IN ('unit', 'yield', 'alarm')),
			station_id bigint,
			lot_id bigint,
			payload jsonb NOT NULL
		);
		CREATE INDEX events_at_idx ON events (at);

		CREATE TABLE lot_bin_counts (
			lot_id bigint NOT NULL REFERENCES lots (id),
			bin smallint NOT NULL,
			n bigint NOT NULL,
			PRIMARY KEY (lot_id, bin)
		);
		INSERT INTO lot_bin_counts (lot_id, bin, n)
			SELECT lot_id, bin, count(*) FROM units WHERE kind IN ('production', 'bench') GROUP BY lot_id, bin;
	`);
};
