// The text of a PDF, page by page, read with Mozilla's pdf.js (an independent reader): tests
// check what a certificate or report says, not how our writer encoded it.
import { getDocument } from 'pdfjs-dist/legacy/build/pdf.mjs';

/** Each page's text items joined with spaces. Assumes `bytes` is a whole PDF file. */
export async function pdfPages(bytes: Uint8Array): Promise<string[]> {
	const doc = await getDocument({ data: new Uint8Array(bytes), useSystemFonts: false, isEvalSupported: false }).promise;
	const pages: string[] = [];
	for (let i = 1; i <= doc.numPages; i++) {
		const page = await doc.getPage(i);
		const content = await page.getTextContent();
		pages.push(content.items.map((it) => ('str' in it ? it.str : '')).join(' ').replace(/\s+/g, ' '));
	}
	await doc.destroy();
	return pages;
}
