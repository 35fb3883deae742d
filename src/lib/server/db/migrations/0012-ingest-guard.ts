// A station post is written by one statement outside an explicit transaction: the chart state
// was read before judging without a lock, and the statement writes the charts only where they
// still hold what was read (point count and limits version). The guard, called in that
// statement's final select, raises when the key was already claimed, the lot was closed, or a
// chart moved meanwhile; the raise undoes the whole statement, and the app answers a replay,
// the closed lot, or tries the post again. SQLSTATEs of our own (class BL):
//   BLKEY key taken, BLLOT lot not open, BLCHT charts moved.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE FUNCTION ingest_guard(claimed bigint, lot_open bigint, charts_written bigint, charts_expected integer) RETURNS boolean
		LANGUAGE plpgsql AS $$
		BEGIN
		  IF claimed = 0 THEN RAISE EXCEPTION 'idempotency key already claimed' USING ERRCODE = 'BLKEY'; END IF;
		  IF lot_open = 0 THEN RAISE EXCEPTION 'lot is not open' USING ERRCODE = 'BLLOT'; END IF;
		  IF charts_written <> charts_expected THEN RAISE EXCEPTION 'charts changed since they were read' USING ERRCODE = 'BLCHT'; END IF;
		  RETURN true;
		END $$;
	`);
};
