// Per-lot bin counters kept per station (shard = station id; 0 for bench files and for what
// was counted before). Every post of a lot upserted the same (lot, bin) row and held its lock
// until commit, so all stations testing one lot took turns: the benchmark saw most of the
// database's time waiting on that lock. With a row per station, stations never wait for each
// other; readers sum the shards (a lot has a few rows per station).
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`
		ALTER TABLE lot_bin_counts ADD COLUMN shard bigint NOT NULL DEFAULT 0;
		ALTER TABLE lot_bin_counts DROP CONSTRAINT lot_bin_counts_pkey;
		ALTER TABLE lot_bin_counts ADD PRIMARY KEY (lot_id, bin, shard);
	`);
};
