// Bench C–V uploads: a checked file is staged (its text kept), then imported once into its lot.
// The partial unique index makes "the same file into the same lot twice" impossible even when
// two imports race; units remember the upload they came from.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE TABLE uploads (
			id bigserial PRIMARY KEY,
			lot_id bigint NOT NULL REFERENCES lots (id),
			file_name text NOT NULL,
			file_sha256 text NOT NULL,
			content text NOT NULL,
			rows integer NOT NULL,
			parts integer NOT NULL,
			status text NOT NULL DEFAULT 'staged' CHECK (status IN ('staged', 'imported')),
			created_by bigint REFERENCES users (id),
			created_at timestamptz NOT NULL DEFAULT now(),
			imported_by bigint REFERENCES users (id),
			imported_at timestamptz
		);
		CREATE UNIQUE INDEX uploads_once_per_lot ON uploads (lot_id, file_sha256) WHERE status = 'imported';
		CREATE INDEX uploads_created_idx ON uploads (created_at);
		ALTER TABLE units ADD COLUMN upload_id bigint REFERENCES uploads (id);
	`);
};
