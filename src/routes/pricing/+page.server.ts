import type { PageServerLoad } from './$types';
import { FREE, LIMIT_WORDS, TEAM, money } from '$lib/server/billing/tiers.js';

// Public: anyone may read the prices and limits.
export const load = (() => ({
	free: FREE.limits,
	team: TEAM.limits,
	seatPrice: money(TEAM.seatCents, TEAM.currency),
	words: LIMIT_WORDS
})) satisfies PageServerLoad;
