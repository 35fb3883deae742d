import type { ParamMatcher } from '@sveltejs/kit';

/** A positive integer id (database keys). */
export const match: ParamMatcher = (param) => /^[1-9]\d{0,15}$/.test(param);
