// Query speed at a million parts and more (measured by `npm run bench`).
//
// Floor tiles count each station's production parts of the last hour. Through
// units_station_received_idx (station_id, received_at) every counted part was a heap visit to
// read its kind: a 20-station line at 170 parts/s makes ~30 000 parts per station and hour, so
// the floor read ~600 000 rows each time. With kind carried in the index (INCLUDE), the count is
// an index-only scan: it touches the heap only for pages not yet marked all-visible. The new
// index replaces the old one (same key, so the station page's parts-per-hour query keeps its
// plan and the ingest still maintains one index for it).
//
// All-visible marks come from vacuum. An insert-only table is vacuumed by autovacuum after
// autovacuum_vacuum_insert_scale_factor (default 20 %) of its size in new rows: on a table of
// 10 M parts that is 2 M parts, hours of a busy line, during which the floor's counts go to the
// heap again. 1 % (plus 10 000 rows) keeps the recent parts' pages marked within minutes; the
// vacuum of an insert-only table reads only the pages not yet marked.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE INDEX units_station_received_kind_idx ON units (station_id, received_at) INCLUDE (kind);
		DROP INDEX units_station_received_idx;
		ALTER TABLE units SET (autovacuum_vacuum_insert_scale_factor = 0.01, autovacuum_vacuum_insert_threshold = 10000);
	`);
};
