// What the lot page's action forms hand back to their panels (a refused field, the values typed, or a done message).
export type LotFormResult = { action?: string; errors?: Record<string, string>; values?: Record<string, string>; done?: string } | null | undefined;

/** The result when it belongs to `action`, else nothing (each panel shows only its own). */
export function resultFor(form: LotFormResult, action: string): LotFormResult {
	return form && form.action === action ? form : null;
}
