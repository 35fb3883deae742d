// Svelte escapes every {expression} it renders; only {@html} and DOM writes bypass that. Each such
// use in the source must be listed here with the reason its content is trusted (never a string
// from a station, an upload or a person). No server is needed: this reads the source tree.
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, test } from 'vitest';

const ROOT = path.resolve(import.meta.dirname, '..', '..');

/** file (relative to the checkout) → why its raw-HTML use is safe. Empty: there is none today. */
const TRUSTED: Record<string, string> = {};

const RAW_HTML = /\{@html\b|\.innerHTML\s*=|\.outerHTML\s*=|insertAdjacentHTML\(|document\.write\(/g;

function sources(dir: string, out: string[] = []): string[] {
	for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
		const full = path.join(dir, e.name);
		if (e.isDirectory()) sources(full, out);
		else if (/\.(svelte|ts|js)$/.test(e.name) && !/\.test\.ts$/.test(e.name)) out.push(full);
	}
	return out;
}

describe('raw HTML in the source', () => {
	test('every {@html}, innerHTML, outerHTML, insertAdjacentHTML and document.write is on trusted content', () => {
		const uses = sources(path.join(ROOT, 'src')).flatMap((file) => {
			const text = fs.readFileSync(file, 'utf8');
			const rel = path.relative(ROOT, file);
			return [...text.matchAll(RAW_HTML)].map(() => rel);
		});
		// The scanner itself sees each form.
		for (const sample of ['{@html note}', 'el.innerHTML = s', 'el.outerHTML= s', 'el.insertAdjacentHTML(', 'document.write(']) expect(sample.match(RAW_HTML), sample).not.toBeNull();
		expect([...new Set(uses)].filter((f) => !(f in TRUSTED)), 'raw HTML from a file not listed in TRUSTED with its reason').toEqual([]);
		// A listed file that no longer uses raw HTML is taken off the list.
		expect(Object.keys(TRUSTED).filter((f) => !uses.includes(f))).toEqual([]);
	});
});
