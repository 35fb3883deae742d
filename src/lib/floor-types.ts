// The floor's data, shared by the server (which computes it) and the browser (which shows it).

export type TileState = 'testing' | 'idle' | 'offline' | 'calibration-due';

export type FloorTile = {
	station: string;
	line: string | null;
	state: TileState;
	lot: string | null;
	productCode: string | null;
	partsLastHour: number;
	rollingYieldPct: number | null;
	rollingWindow: number;
	openAlarms: number;
	lastSeenAt: string | null;
	calibrationValidUntil: string | null;
};

export type FloorView = { at: string; tiles: FloorTile[]; lines: { line: string; partsLastHour: number; yieldPct: number | null; openAlarms: number }[] };
