/**
 * Free-tier limits, enforced in server modules (never only in pages). `check` answers; `assert` throws
 * the JSON error `limit_reached` (402) whose message says what the Team tier unlocks.
 */
import { and, count, eq, gt, gte, isNull, sql } from 'drizzle-orm';
import { db } from '../db/index.js';
import { calibrationJobs, invitations, memberships, projects, teamBilling } from '../db/schema.js';
import { ApiError } from '../http.js';
import { FREE, LIMIT_WORDS, TEAM, money, tierFor, type LimitKind, type Tier } from './tiers.js';

export interface LimitCheck {
	kind: LimitKind;
	tier: Tier['name'];
	used: number;
	/** null when the tier has no limit */
	limit: number | null;
	allowed: boolean;
	/** why not, and what the Team tier unlocks; empty when allowed */
	message: string;
}

export async function tierOf(teamId: string): Promise<Tier> {
	const [row] = await db.select({ status: teamBilling.status }).from(teamBilling).where(eq(teamBilling.teamId, teamId));
	return tierFor(row?.status);
}

/** How much of a limit the team uses now. Members count open, unexpired invitations too. */
export async function usage(teamId: string, kind: LimitKind): Promise<number> {
	if (kind === 'projects') {
		const [r] = await db.select({ n: count() }).from(projects).where(eq(projects.teamId, teamId));
		return r.n;
	}
	if (kind === 'members') {
		const [m] = await db.select({ n: count() }).from(memberships).where(eq(memberships.teamId, teamId));
		const [i] = await db
			.select({ n: count() })
			.from(invitations)
			.where(and(eq(invitations.teamId, teamId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())));
		return m.n + i.n;
	}
	const [c] = await db
		.select({ n: count() })
		.from(calibrationJobs)
		.where(and(eq(calibrationJobs.teamId, teamId), gte(calibrationJobs.createdAt, sql`date_trunc('month', now() at time zone 'utc') at time zone 'utc'`)));
	return c.n;
}

function explain(kind: LimitKind, tier: Tier, used: number, limit: number): string {
	const what = `${LIMIT_WORDS[kind].noun} ${LIMIT_WORDS[kind].per}`;
	if (tier.name === 'team') return `The Team tier allows ${limit} ${what}; this team has reached ${used}. The count starts again on the first of next month.`;
	const team = TEAM.limits[kind];
	const unlock = team === null ? `has no limit on ${LIMIT_WORDS[kind].noun}` : `allows ${team} ${what}`;
	return `The Free tier allows ${limit} ${what}; this team has ${used}. The Team tier (${money(TEAM.seatCents)} per seat per month) ${unlock}: an owner can subscribe on the team's billing page. Everything already saved stays readable.`;
}

/** May the team add one more of `kind`? */
export async function check(teamId: string, kind: LimitKind): Promise<LimitCheck> {
	const tier = await tierOf(teamId);
	const limit = tier.limits[kind];
	const used = await usage(teamId, kind);
	const allowed = limit === null || used < limit;
	return { kind, tier: tier.name, used, limit, allowed, message: allowed ? '' : explain(kind, tier, used, limit!) };
}

/** Throw `limit_reached` (402) when the team may not add one more of `kind`. */
export async function assert(teamId: string, kind: LimitKind, field?: string): Promise<void> {
	const c = await check(teamId, kind);
	if (!c.allowed) throw new ApiError(402, 'limit_reached', c.message, field ? { [field]: c.message } : undefined);
}

/** Usage of every limit, for the billing page. */
export async function overview(teamId: string) {
	const tier = await tierOf(teamId);
	const kinds: LimitKind[] = ['members', 'projects', 'calibrations'];
	return Promise.all(kinds.map(async (kind) => ({ kind, ...LIMIT_WORDS[kind], used: await usage(teamId, kind), limit: tier.limits[kind], free: FREE.limits[kind], team: TEAM.limits[kind] })));
}
