import type { Actions, PageServerLoad } from './$types';
import * as guard from '$lib/server/guard.js';
import * as preferences from '$lib/server/preferences.js';

export const load = (async (event) => {
	const me = await guard.user(event);
	return { email: me.email, preferences: await preferences.get(me.id) };
}) satisfies PageServerLoad;

export const actions = {
	save: async (event) => {
		const me = await guard.user(event);
		const form = await event.request.formData();
		// An unchecked checkbox sends nothing, so absence means off.
		const saved = await preferences.set(me.id, { calibrationMail: form.get('calibrationMail') === 'on' });
		return { saved: true, preferences: saved };
	}
} satisfies Actions;
