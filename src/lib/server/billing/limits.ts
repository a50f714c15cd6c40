/**
 * Free-tier limits, enforced in server modules (never only in pages). `check` answers; `assert` throws
 * the JSON error `limit_reached` (402) whose message says what the Team tier unlocks.
 */
import { and, count, eq, gt, gte, isNull, sql } from 'drizzle-orm';
import { db } from '../db/index.js';
import { calibrationJobs, calibrations, invitations, memberships, projects, teamBilling } from '../db/schema.js';
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

type Tx = Parameters<Parameters<typeof db.transaction>[0]>[0];
type Q = typeof db | Tx;

export async function tierOf(teamId: string, q: Q = db): Promise<Tier> {
	const [row] = await q.select({ status: teamBilling.status }).from(teamBilling).where(eq(teamBilling.teamId, teamId));
	return tierFor(row?.status);
}

/** How much of a limit the team uses now. Members count open, unexpired invitations too. */
export async function usage(teamId: string, kind: LimitKind, q: Q = db): Promise<number> {
	if (kind === 'projects') {
		const [r] = await q.select({ n: count() }).from(projects).where(eq(projects.teamId, teamId));
		return r.n;
	}
	if (kind === 'members') {
		const [m] = await q.select({ n: count() }).from(memberships).where(eq(memberships.teamId, teamId));
		const [i] = await q
			.select({ n: count() })
			.from(invitations)
			.where(and(eq(invitations.teamId, teamId), isNull(invitations.acceptedAt), isNull(invitations.revokedAt), gt(invitations.expiresAt, new Date())));
		return m.n + i.n;
	}
	// a job that reused an older calibration ran nothing, so it does not count as a run
	const [c] = await q
		.select({ n: count() })
		.from(calibrationJobs)
		.leftJoin(calibrations, eq(calibrations.id, calibrationJobs.calibrationId))
		.where(
			and(
				eq(calibrationJobs.teamId, teamId),
				gte(calibrationJobs.createdAt, sql`date_trunc('month', now() at time zone 'utc') at time zone 'utc'`),
				sql`(${calibrations.id} is null or ${calibrations.createdAt} >= ${calibrationJobs.createdAt})`
			)
		);
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
export async function check(teamId: string, kind: LimitKind, q: Q = db): Promise<LimitCheck> {
	const tier = await tierOf(teamId, q);
	const limit = tier.limits[kind];
	const used = await usage(teamId, kind, q);
	const allowed = limit === null || used < limit;
	return { kind, tier: tier.name, used, limit, allowed, message: allowed ? '' : explain(kind, tier, used, limit!) };
}

/** Throw `limit_reached` (402) when the team may not add one more of `kind`. */
export async function assert(teamId: string, kind: LimitKind, field?: string): Promise<void> {
	const c = await check(teamId, kind);
	if (!c.allowed) throw new ApiError(402, 'limit_reached', c.message, field ? { [field]: c.message } : undefined);
}

/**
 * Check and add in one transaction that holds the team's lock for `kind`, so concurrent adds
 * cannot pass the limit together. `add` runs only when one more is allowed.
 */
export async function within<T>(teamId: string, kind: LimitKind, field: string, add: (tx: Tx) => Promise<T>): Promise<T> {
	return db.transaction(async (tx) => {
		await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`limit:${kind}:${teamId}`}))`);
		const c = await check(teamId, kind, tx);
		if (!c.allowed) throw new ApiError(402, 'limit_reached', c.message, { [field]: c.message });
		return add(tx);
	});
}

/** Usage of every limit, for the billing page. */
export async function overview(teamId: string) {
	const tier = await tierOf(teamId);
	const kinds: LimitKind[] = ['members', 'projects', 'calibrations'];
	return Promise.all(kinds.map(async (kind) => ({ kind, ...LIMIT_WORDS[kind], used: await usage(teamId, kind), limit: tier.limits[kind], free: FREE.limits[kind], team: TEAM.limits[kind] })));
}
