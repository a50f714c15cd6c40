import type { PageServerLoad } from './$types';

// Auth.js sends its error codes here; say in plain words what happened and what to do.
const explain: Record<string, { title: string; text: string }> = {
	Verification: {
		title: 'This sign-in link no longer works',
		text: 'Links work once and expire after 15 minutes. This one was already used or has expired. Ask for a new one.'
	},
	AccessDenied: { title: 'Sign-in refused', text: 'This address may not sign in.' },
	Configuration: { title: 'Sign-in is not available', text: 'The server could not send or check sign-in links. Try again in a few minutes.' }
};

export const load = (({ url }) => {
	const code = url.searchParams.get('error') ?? 'Default';
	return { code, ...(explain[code] ?? { title: 'Sign-in did not work', text: 'Something went wrong while signing you in. Ask for a new link.' }) };
}) satisfies PageServerLoad;
