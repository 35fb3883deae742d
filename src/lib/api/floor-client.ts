// The browser's typed access to the floor: the JSON view and the live stream that says when to
// read it again. The same endpoints scripts use.
import type { FloorView } from '$lib/floor-types';

export type { FloorView, FloorTile } from '$lib/floor-types';

export async function fetchFloor(fetcher: typeof fetch = fetch): Promise<FloorView> {
	const res = await fetcher('/api/v1/floor', { headers: { accept: 'application/json' } });
	if (!res.ok) throw new Error(`floor: ${res.status}`);
	return (await res.json()) as FloorView;
}

/**
 * Calls `onChange` (at most every `minGapMs`) whenever the stream brings a part, a yield change
 * or an alarm. Returns a function that closes the stream. EventSource reconnects by itself and
 * sends Last-Event-ID, so nothing is missed across a network blip.
 */
export function watchFloor(onChange: () => void, minGapMs = 700): () => void {
	const source = new EventSource('/api/v1/stream');
	let timer: ReturnType<typeof setTimeout> | null = null;
	const schedule = () => {
		timer ??= setTimeout(() => {
			timer = null;
			onChange();
		}, minGapMs);
	};
	for (const name of ['unit', 'yield', 'alarm']) source.addEventListener(name, schedule);
	return () => {
		if (timer) clearTimeout(timer);
		source.close();
	};
}
