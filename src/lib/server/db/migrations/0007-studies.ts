// Measurement-system studies: a study names its parts (serial + the lot each comes from), the
// stations that take the place of a classic study's appraisers, and the trials per part.
//
// A study's measurements are ordinary `units` rows with kind = 'study' (judged like any part, so
// the same conversion and fit apply), linked to the study through a side table rather than a new
// column on units: the units table is the hot, million-row table, and the link carries facts that
// belong to the study (which trial of which cell), with the one-measurement-per-cell rule as a
// unique constraint. Nothing that counts yield or feeds charts reads kind = 'study'.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE TABLE studies (
			id bigserial PRIMARY KEY,
			product_id bigint NOT NULL REFERENCES products (id),
			name text NOT NULL,
			trials integer NOT NULL CHECK (trials BETWEEN 2 AND 10),
			multiplier double precision NOT NULL DEFAULT 6 CHECK (multiplier IN (6, 5.15)),
			status text NOT NULL DEFAULT 'draft' CHECK (status IN ('draft', 'running', 'finished')),
			created_by bigint REFERENCES users (id),
			created_at timestamptz NOT NULL DEFAULT now(),
			started_at timestamptz,
			finished_at timestamptz
		);
		CREATE INDEX studies_status_idx ON studies (status, created_at DESC);

		CREATE TABLE study_parts (
			study_id bigint NOT NULL REFERENCES studies (id),
			position integer NOT NULL,
			serial text NOT NULL,
			lot_id bigint NOT NULL REFERENCES lots (id),
			PRIMARY KEY (study_id, serial),
			UNIQUE (study_id, position)
		);

		CREATE TABLE study_stations (
			study_id bigint NOT NULL REFERENCES studies (id),
			position integer NOT NULL,
			station_id bigint NOT NULL REFERENCES stations (id),
			PRIMARY KEY (study_id, station_id),
			UNIQUE (study_id, position)
		);
		CREATE INDEX study_stations_station_idx ON study_stations (station_id);

		-- One stored unit per cell (part x station x trial).
		CREATE TABLE study_measurements (
			unit_id bigint PRIMARY KEY REFERENCES units (id),
			study_id bigint NOT NULL,
			serial text NOT NULL,
			station_id bigint NOT NULL,
			trial integer NOT NULL CHECK (trial >= 1),
			UNIQUE (study_id, serial, station_id, trial),
			FOREIGN KEY (study_id, serial) REFERENCES study_parts (study_id, serial),
			FOREIGN KEY (study_id, station_id) REFERENCES study_stations (study_id, station_id)
		);
	`);
};
