import { z } from 'zod';

export const signInForm = z.object({
	email: z.email({ error: 'Enter a valid e-mail address, like ana@example.org.' }).max(254, 'E-mail address is too long.'),
	redirectTo: z.string().default('/')
});

/** Only same-site paths are followed after sign-in. */
export function safeRedirect(target: string | null | undefined): string {
	return target && target.startsWith('/') && !target.startsWith('//') && !target.startsWith('/\\') ? target : '/';
}
