// Query strings of the bench-upload endpoints and page.
import { z } from 'zod';

export const UploadQuery = z.object({
	lot: z.string({ error: 'Choose a lot' }).trim().min(1, { error: 'Choose a lot' }).max(40),
	fileName: z
		.string({ error: 'Name the file' })
		.trim()
		.min(1, { error: 'Name the file' })
		.max(200, { error: 'File name longer than 200 characters' })
		.regex(/^[^\x00-\x1f\x7f/\\]+$/, { error: 'File name without slashes or control characters' })
});

export const UploadsPageQuery = z.object({ lot: z.string().trim().max(40).optional().catch(undefined) });

export const UnitIdParam = z.coerce.number().int().positive().max(Number.MAX_SAFE_INTEGER);

export const UnitsBySerialQuery = z.object({ serial: z.string({ error: 'Give a serial' }).trim().min(1, { error: 'Give a serial' }).max(80) });
