// The floor asks "how many parts did this station test in the last hour" for every tile.
import type { Migration } from '../migrate';

export const up: Migration = async ({ context: sql }) => {
	await sql.query(`CREATE INDEX units_station_received_idx ON units (station_id, received_at);`);
};
