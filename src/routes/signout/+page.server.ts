import { redirect } from '@sveltejs/kit';
import type { Actions, PageServerLoad } from './$types';
import { signOut } from '../../auth.js';

export const load = (() => redirect(303, '/')) satisfies PageServerLoad;

export const actions = {
	default: async (event) => {
		await signOut(event);
	}
} satisfies Actions;
