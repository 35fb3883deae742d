// The base of every PDF Biasline writes (lot certificates, study reports): the app's own fonts,
// an A4 page with a letterhead and a footer, and the finished document as bytes.
import { createRequire } from 'node:module';
import PDFDocument from 'pdfkit';

const require = createRequire(import.meta.url);
const fontFile = (pkg: string, file: string) => require.resolve(`@fontsource/${pkg}/files/${file}`);

/** The fonts registered on every document, by the names used with `doc.font(...)`. */
export const PDF_FONTS = {
	body: fontFile('barlow', 'barlow-latin-400-normal.woff'),
	bodyBold: fontFile('barlow', 'barlow-latin-600-normal.woff'),
	display: fontFile('barlow-semi-condensed', 'barlow-semi-condensed-latin-600-normal.woff'),
	mono: fontFile('jetbrains-mono', 'jetbrains-mono-latin-400-normal.woff')
} as const;
export type PdfFont = keyof typeof PDF_FONTS;

/** Brand colours as in tailwind.config.ts (oxide band, ink text, copper rule). */
export const PDF_COLOURS = { oxide: '#2c2447', ink: '#1c1a22', copper: '#c8733a', muted: '#7b7686', pass: '#2e7d4f', fail: '#b8322a' } as const;

export type PdfDocument = InstanceType<typeof PDFDocument>;

export type Letterhead = {
	/** Document title, e.g. "Certificate of conformance". */
	title: string;
	/** One line under the title, e.g. "Lot LT-26-1187 · KV-1405". */
	subtitle: string;
	/** The site's name as configured, e.g. the demo's "Corvane Semiconductor, Halden works". */
	site: string;
	/** When the document was made; printed in the footer of every page. */
	generatedAt: Date;
};

const MARGIN = 50;

/**
 * A new A4 document with the fonts registered, the letterhead drawn on the first page and a
 * footer ("Biasline · site · generated … · page n of m") on every page when `finish` runs.
 */
export function newDocument(head: Letterhead): PdfDocument {
	const doc = new PDFDocument({ size: 'A4', margin: MARGIN, bufferPages: true, info: { Title: `${head.title} — ${head.subtitle}`, Creator: 'Biasline' } });
	for (const [name, file] of Object.entries(PDF_FONTS)) doc.registerFont(name, file);
	const width = doc.page.width;
	doc.rect(0, 0, width, 74).fill(PDF_COLOURS.oxide);
	doc.fillColor('#ffffff').font('display').fontSize(20).text(head.title, MARGIN, 22, { width: width - 2 * MARGIN });
	doc.font('body').fontSize(10).text(head.subtitle, MARGIN, 48, { width: width - 2 * MARGIN });
	doc.rect(0, 74, width, 3).fill(PDF_COLOURS.copper);
	doc.fillColor(PDF_COLOURS.ink).font('body').fontSize(10);
	doc.x = MARGIN;
	doc.y = 96;
	(doc as PdfDocument & { _biaslineHead?: Letterhead })._biaslineHead = head;
	return doc;
}

/** A section heading in the display face with a thin copper rule under it. */
export function heading(doc: PdfDocument, text: string): void {
	if (doc.y > doc.page.height - 140) doc.addPage();
	doc.moveDown(0.8);
	doc.font('display').fontSize(13).fillColor(PDF_COLOURS.oxide).text(text, MARGIN);
	const y = doc.y + 2;
	doc.moveTo(MARGIN, y).lineTo(doc.page.width - MARGIN, y).lineWidth(0.6).strokeColor(PDF_COLOURS.copper).stroke();
	doc.moveDown(0.5);
	doc.font('body').fontSize(10).fillColor(PDF_COLOURS.ink);
}

/**
 * A simple table: column headers, then rows of text. Widths are fractions of the text width and
 * should sum to 1. Starts a new page when a row would not fit.
 */
export function table(doc: PdfDocument, columns: { header: string; width: number; align?: 'left' | 'right' }[], rows: string[][]): void {
	const textWidth = doc.page.width - 2 * MARGIN;
	const xs: number[] = [];
	let x = MARGIN;
	for (const c of columns) {
		xs.push(x);
		x += c.width * textWidth;
	}
	const drawRow = (cells: string[], font: PdfFont) => {
		if (doc.y > doc.page.height - MARGIN - 40) doc.addPage();
		const y = doc.y;
		let bottom = y;
		cells.forEach((cell, i) => {
			const col = columns[i];
			if (!col) return;
			doc.font(font).fontSize(9).text(cell, xs[i] ?? MARGIN, y, { width: col.width * textWidth - 6, align: col.align ?? 'left' });
			bottom = Math.max(bottom, doc.y);
		});
		doc.x = MARGIN;
		doc.y = bottom + 3;
	};
	doc.fillColor(PDF_COLOURS.muted);
	drawRow(
		columns.map((c) => c.header),
		'bodyBold'
	);
	doc.fillColor(PDF_COLOURS.ink);
	for (const r of rows) drawRow(r, 'body');
	doc.font('body').fontSize(10);
	doc.moveDown(0.3);
}

/** Draws the footers and returns the finished document's bytes. */
export function finish(doc: PdfDocument): Promise<Buffer> {
	const head = (doc as PdfDocument & { _biaslineHead?: Letterhead })._biaslineHead;
	const chunks: Buffer[] = [];
	const done = new Promise<Buffer>((resolve, reject) => {
		doc.on('data', (c: Buffer) => chunks.push(c));
		doc.on('end', () => resolve(Buffer.concat(chunks)));
		doc.on('error', reject);
	});
	const range = doc.bufferedPageRange();
	for (let i = range.start; i < range.start + range.count; i++) {
		doc.switchToPage(i);
		const y = doc.page.height - MARGIN + 14;
		const text = `Biasline · ${head?.site ?? ''} · generated ${head?.generatedAt.toISOString().replace('T', ' ').slice(0, 16) ?? ''} UTC · page ${i - range.start + 1} of ${range.count}`;
		// Writing below the bottom margin would start a new page: lift the margin while drawing.
		const bottom = doc.page.margins.bottom;
		doc.page.margins.bottom = 0;
		doc.font('body').fontSize(8).fillColor(PDF_COLOURS.muted).text(text, MARGIN, y, { width: doc.page.width - 2 * MARGIN, align: 'center', lineBreak: false });
		doc.page.margins.bottom = bottom;
	}
	doc.end();
	return done;
}
