// Parts per station and minute, counted as the parts are stored, so the floor's "parts in the
// last hour" and the station page's throughput read at most a day of minute rows instead of
// counting every part received (the benchmark's floor took 340 ms with 1.5 M parts received in
// the hour). A statement-level trigger on units keeps the counts for every writer (station posts,
// bench-file uploads, studies); it also drops the station's rows older than two days, so a
// station holds at most 2 880 of them. The index that served those counts goes: the ingest paid
// for it on every part.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		CREATE TABLE station_minute_counts (
		  station_id bigint NOT NULL REFERENCES stations (id) ON DELETE CASCADE,
		  minute timestamptz NOT NULL,
		  parts integer NOT NULL,
		  production integer NOT NULL,
		  PRIMARY KEY (station_id, minute)
		);
		INSERT INTO station_minute_counts (station_id, minute, parts, production)
		  SELECT station_id, date_trunc('minute', received_at), count(*), count(*) FILTER (WHERE kind = 'production')
		  FROM units WHERE station_id IS NOT NULL AND received_at > now() - interval '2 days' GROUP BY 1, 2;
		CREATE FUNCTION count_station_minutes() RETURNS trigger LANGUAGE plpgsql AS $$
		BEGIN
		  INSERT INTO station_minute_counts AS m (station_id, minute, parts, production)
		    SELECT station_id, date_trunc('minute', received_at), count(*), count(*) FILTER (WHERE kind = 'production')
		    FROM new_units WHERE station_id IS NOT NULL GROUP BY 1, 2
		  ON CONFLICT (station_id, minute) DO UPDATE SET parts = m.parts + EXCLUDED.parts, production = m.production + EXCLUDED.production;
		  DELETE FROM station_minute_counts m USING (SELECT DISTINCT station_id FROM new_units WHERE station_id IS NOT NULL) s
		    WHERE m.station_id = s.station_id AND m.minute < now() - interval '2 days';
		  RETURN NULL;
		END $$;
		CREATE TRIGGER units_count_station_minutes AFTER INSERT ON units REFERENCING NEW TABLE AS new_units
		  FOR EACH STATEMENT EXECUTE FUNCTION count_station_minutes();
		DROP INDEX units_station_received_kind_idx;
	`);
};
