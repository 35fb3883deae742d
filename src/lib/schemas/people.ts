// Input schemas for people: shared by the sign-in form, the admin forms and the JSON API.
import { z } from 'zod';
import { ROLES } from '$lib/auth/roles';

export const Email = z.email({ error: 'Enter a valid e-mail address' }).max(254).transform((s) => s.trim());
// 12 characters: common practice (OWASP ASVS 2.1.1 asks for at least 12).
export const NewPassword = z
	.string({ error: 'Enter a password' })
	.min(12, { error: 'At least 12 characters' })
	.max(128, { error: 'At most 128 characters' });

export const SignInBody = z.object({
	email: z.string({ error: 'Enter your e-mail address' }).trim().min(1, { error: 'Enter your e-mail address' }).max(254),
	password: z.string({ error: 'Enter your password' }).min(1, { error: 'Enter your password' }).max(128)
});

export const Role = z.enum(ROLES, { error: 'Choose admin, engineer or operator' });

export const NewUserBody = z.object({
	email: Email,
	name: z.string({ error: 'Enter a name' }).trim().min(1, { error: 'Enter a name' }).max(120),
	role: Role,
	password: NewPassword
});

export const ChangeRoleBody = z.object({ userId: z.coerce.number().int().positive(), role: Role });
export const UserIdBody = z.object({ userId: z.coerce.number().int().positive() });

export const ChangePasswordBody = z
	.object({
		current: z.string().min(1, { error: 'Enter your current password' }),
		password: NewPassword,
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, { path: ['confirm'], error: 'The two new passwords differ' });

export const SessionUserOut = z.object({ email: z.string(), name: z.string(), role: Role });

export const SetPasswordBody = z.object({ userId: z.coerce.number().int().positive(), password: NewPassword });
