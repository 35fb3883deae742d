// The lot page's needs: the reason behind a lot's disposition, matched-set builds and their sets,
// indexes for the parts table's keyset paging, and certificate e-mail with an attachment.
//
// Parts table: every sort is served by an index (lot_id, key, id), so a page is an index range
// scan from the cursor whatever the lot's size: serial, tested time, station. The bin sort needs
// (lot_id, bin, id); it replaces units_lot_bin_idx (lot_id, bin), of which it is a prefix-compatible
// superset, so the ingest still maintains one index per sort. The capacitance sorts have no
// index (the plan point is a variable array position): they read the lot's rows through
// units_lot_idx, bounded by the lot's size, not by the table's.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		ALTER TABLE lots ADD COLUMN disposition_reason text;
		ALTER TABLE lots ADD COLUMN disposition_at timestamptz;
		ALTER TABLE lots ADD COLUMN disposition_by bigint REFERENCES users (id);

		CREATE INDEX units_lot_serial_idx ON units (lot_id, serial, id);
		CREATE INDEX units_lot_tested_idx ON units (lot_id, tested_at, id);
		CREATE INDEX units_lot_station_idx ON units (lot_id, (coalesce(station_id, 0)), id);
		CREATE INDEX units_lot_bin_id_idx ON units (lot_id, bin, id);
		DROP INDEX IF EXISTS units_lot_bin_idx;

		-- A build forms sets from the lot's passing production parts at one set size and tolerance;
		-- the newest build is the lot's current list, older builds stay for the record.
		CREATE TABLE matched_set_builds (
			id bigserial PRIMARY KEY,
			lot_id bigint NOT NULL REFERENCES lots (id),
			set_size integer NOT NULL CHECK (set_size BETWEEN 2 AND 16),
			tolerance_pct double precision NOT NULL CHECK (tolerance_pct > 0 AND tolerance_pct <= 50),
			candidates integer NOT NULL,
			set_count integer NOT NULL,
			unmatched integer NOT NULL,
			built_at timestamptz NOT NULL DEFAULT now(),
			built_by bigint REFERENCES users (id)
		);
		CREATE INDEX matched_set_builds_lot_idx ON matched_set_builds (lot_id, id DESC);

		CREATE TABLE matched_sets (
			build_id bigint NOT NULL REFERENCES matched_set_builds (id) ON DELETE CASCADE,
			seq integer NOT NULL,
			unit_ids bigint[] NOT NULL,
			-- Largest |c − mean| / mean over the members and plan points, in percent.
			spread_pct double precision NOT NULL,
			PRIMARY KEY (build_id, seq)
		);

		-- Certificate e-mail: a customer address (no user), the PDF kept with the row so the message
		-- sends exactly the certificate that was issued.
		ALTER TABLE mail_queue DROP CONSTRAINT IF EXISTS mail_queue_kind_check;
		ALTER TABLE mail_queue ADD CONSTRAINT mail_queue_kind_check CHECK (kind IN ('alarm', 'digest', 'certificate'));
		ALTER TABLE mail_queue ADD COLUMN attachment bytea;
		ALTER TABLE mail_queue ADD COLUMN attachment_name text;
		ALTER TABLE mail_queue ADD COLUMN attachment_type text;
	`);
};
