/** The two tiers Loadline sells, their limits and the seat price; the pricing page states exactly these. */

export type LimitKind = 'members' | 'projects' | 'calibrations';
export type TierName = 'free' | 'team';

export interface Tier {
	name: TierName;
	label: string;
	/** null means no limit */
	limits: Record<LimitKind, number | null>;
	seatCents: number;
	currency: string;
}

export const FREE: Tier = {
	name: 'free',
	label: 'Free',
	limits: { members: 5, projects: 10, calibrations: 50 },
	seatCents: 0,
	currency: 'usd'
};

export const TEAM: Tier = {
	name: 'team',
	label: 'Team',
	limits: { members: null, projects: null, calibrations: 2000 },
	seatCents: 1500,
	currency: 'usd'
};

export const TIERS = [FREE, TEAM];

/** What each limit counts, in the words the pages use. */
export const LIMIT_WORDS: Record<LimitKind, { noun: string; per: string }> = {
	members: { noun: 'members', per: 'per team (open invitations count)' },
	projects: { noun: 'projects', per: 'per team' },
	calibrations: { noun: 'calibration runs', per: 'per calendar month (UTC)' }
};

/** Stripe statuses that keep the Team tier; past_due is Stripe's retry window, so work goes on while it retries. */
const PAID = new Set(['active', 'trialing', 'past_due']);

export function tierFor(status: string | null | undefined): Tier {
	return status && PAID.has(status) ? TEAM : FREE;
}

export function money(cents: number, currency = 'usd'): string {
	return new Intl.NumberFormat('en-US', { style: 'currency', currency: currency.toUpperCase() }).format(cents / 100);
}
