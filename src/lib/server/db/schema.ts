/** Every table of Loadline. Migrations in drizzle/ are generated from this file by drizzle-kit. */
import { sql } from 'drizzle-orm';
import { bigint, boolean, doublePrecision, index, integer, jsonb, pgEnum, pgTable, primaryKey, real, text, timestamp, uniqueIndex, uuid } from 'drizzle-orm/pg-core';

// Auth.js adapter tables (names and columns as @auth/drizzle-adapter expects).
export const users = pgTable('user', {
	id: text('id')
		.primaryKey()
		.$defaultFn(() => crypto.randomUUID()),
	name: text('name'),
	email: text('email').unique(),
	emailVerified: timestamp('emailVerified', { mode: 'date' }),
	image: text('image')
});

export const accounts = pgTable(
	'account',
	{
		userId: text('userId')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		type: text('type').$type<'email' | 'oauth' | 'oidc' | 'webauthn'>().notNull(),
		provider: text('provider').notNull(),
		providerAccountId: text('providerAccountId').notNull(),
		refresh_token: text('refresh_token'),
		access_token: text('access_token'),
		expires_at: integer('expires_at'),
		token_type: text('token_type'),
		scope: text('scope'),
		id_token: text('id_token'),
		session_state: text('session_state')
	},
	(t) => [primaryKey({ columns: [t.provider, t.providerAccountId] })]
);

export const sessions = pgTable('session', {
	sessionToken: text('sessionToken').primaryKey(),
	userId: text('userId')
		.notNull()
		.references(() => users.id, { onDelete: 'cascade' }),
	expires: timestamp('expires', { mode: 'date' }).notNull()
});

// Auth.js stores a hash of the magic-link token here, never the token itself.
export const verificationTokens = pgTable(
	'verificationToken',
	{
		identifier: text('identifier').notNull(),
		token: text('token').notNull(),
		expires: timestamp('expires', { mode: 'date' }).notNull()
	},
	(t) => [primaryKey({ columns: [t.identifier, t.token] })]
);

export const roleEnum = pgEnum('role', ['owner', 'admin', 'editor', 'viewer']);

export const teams = pgTable('team', {
	id: uuid('id').primaryKey().defaultRandom(),
	name: text('name').notNull(),
	/** a user's own team, made at first sign-in */
	personal: boolean('personal').notNull().default(false),
	createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
});

export const memberships = pgTable(
	'membership',
	{
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		userId: text('user_id')
			.notNull()
			.references(() => users.id, { onDelete: 'cascade' }),
		role: roleEnum('role').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [primaryKey({ columns: [t.teamId, t.userId] }), index('membership_user_idx').on(t.userId)]
);

export const projects = pgTable(
	'project',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		name: text('name').notNull(),
		description: text('description').notNull().default(''),
		createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp('updated_at', { withTimezone: true })
			.notNull()
			.defaultNow()
			.$onUpdate(() => sql`now()`)
	},
	// Names compare case-insensitively so "Ads" and "ads" cannot both exist in one team.
	(t) => [uniqueIndex('project_team_name_unique').on(t.teamId, sql`lower(${t.name})`)]
);

// Planning workspace -------------------------------------------------------------

/** The team's own machine catalog (presets live in code). `profile` follows the machine schema. */
export const machines = pgTable(
	'machine',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		name: text('name').notNull(),
		profile: jsonb('profile').notNull(),
		/** 'manual' or 'probe' (uploaded from `loadline probe-machine`) */
		source: text('source').notNull().default('manual'),
		retiredAt: timestamp('retired_at', { withTimezone: true }),
		createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('machine_team_name_unique').on(t.teamId, sql`lower(${t.name})`)]
);

/** A measured calibration record, reused by every plan of the same shape until it is too old. */
export const calibrations = pgTable(
	'calibration',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		/** hash of what the measurements depend on (k, p, value kind, d footprint, loss, C, tol, machine ratios) */
		shapeKey: text('shape_key').notNull(),
		/** 'synthetic' or 'sample' (ran on an uploaded sample of real data) */
		source: text('source').notNull().default('synthetic'),
		uploadId: uuid('upload_id'),
		record: jsonb('record').notNull(),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('calibration_shape_idx').on(t.teamId, t.shapeKey, t.createdAt)]
);

export const plans = pgTable(
	'plan',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		projectId: uuid('project_id')
			.notNull()
			.references(() => projects.id, { onDelete: 'cascade' }),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		name: text('name').notNull(),
		/** the plan schema's JSON (PLAN.json) */
		input: jsonb('input').notNull(),
		/** the estimate snapshot at the last save */
		estimate: jsonb('estimate'),
		calibrationId: uuid('calibration_id').references(() => calibrations.id, { onDelete: 'set null' }),
		// Columns the plan table sorts and filters on, copied from the snapshot.
		recommended: text('recommended'),
		p10Seconds: doublePrecision('p10_seconds'),
		p50Seconds: doublePrecision('p50_seconds'),
		p90Seconds: doublePrecision('p90_seconds'),
		cost: doublePrecision('cost'),
		deadlineVerdict: text('deadline_verdict'),
		createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
		updatedBy: text('updated_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [uniqueIndex('plan_project_name_unique').on(t.projectId, sql`lower(${t.name})`), index('plan_team_idx').on(t.teamId)]
);

/** Every save of a plan, so history shows how its answer moved. */
export const planRevisions = pgTable(
	'plan_revision',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		planId: uuid('plan_id')
			.notNull()
			.references(() => plans.id, { onDelete: 'cascade' }),
		input: jsonb('input').notNull(),
		estimate: jsonb('estimate'),
		calibrationId: uuid('calibration_id').references(() => calibrations.id, { onDelete: 'set null' }),
		p50Seconds: doublePrecision('p50_seconds'),
		createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('plan_revision_plan_idx').on(t.planId, t.createdAt)]
);

export const jobStatusEnum = pgEnum('job_status', ['queued', 'running', 'done', 'failed', 'cancelled']);

/** A calibration job as users see it; the queue itself is pg-boss's own schema. */
export const calibrationJobs = pgTable(
	'calibration_job',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		planId: uuid('plan_id').references(() => plans.id, { onDelete: 'set null' }),
		uploadId: uuid('upload_id'),
		shapeKey: text('shape_key').notNull(),
		/** the plan input the calibration is shaped after */
		input: jsonb('input').notNull(),
		status: jobStatusEnum('status').notNull().default('queued'),
		phase: text('phase').notNull().default('waiting for a worker'),
		fraction: real('fraction').notNull().default(0),
		error: text('error'),
		attempts: integer('attempts').notNull().default(0),
		queueJobId: text('queue_job_id'),
		calibrationId: uuid('calibration_id').references(() => calibrations.id, { onDelete: 'set null' }),
		createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('calibration_job_team_idx').on(t.teamId, t.createdAt), index('calibration_job_plan_idx').on(t.planId)]
);

export const uploadStatusEnum = pgEnum('upload_status', ['stored', 'parsing', 'ready', 'rejected']);

/** A sample of a real dataset, stored on disk and parsed by a worker. */
export const uploads = pgTable(
	'upload',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		fileName: text('file_name').notNull(),
		/** 'svmlight' or 'csv' */
		kind: text('kind').notNull(),
		labelColumn: text('label_column'),
		gzip: boolean('gzip').notNull().default(false),
		bytes: bigint('bytes', { mode: 'number' }).notNull(),
		storedPath: text('stored_path').notNull(),
		status: uploadStatusEnum('status').notNull().default('stored'),
		profile: jsonb('profile'),
		badLines: jsonb('bad_lines'),
		error: text('error'),
		createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
	},
	(t) => [index('upload_team_idx').on(t.teamId, t.createdAt)]
);

/** A named, shareable side-by-side of plans of one team. */
export const comparisons = pgTable('comparison', {
	id: uuid('id').primaryKey().defaultRandom(),
	teamId: uuid('team_id')
		.notNull()
		.references(() => teams.id, { onDelete: 'cascade' }),
	name: text('name').notNull(),
	planIds: uuid('plan_ids').array().notNull(),
	createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
	createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow()
});

export type Role = (typeof roleEnum.enumValues)[number];
export type Team = typeof teams.$inferSelect;
export type Project = typeof projects.$inferSelect;
export type User = typeof users.$inferSelect;
export type Machine = typeof machines.$inferSelect;
export type PlanRow = typeof plans.$inferSelect;
export type Calibration = typeof calibrations.$inferSelect;
export type CalibrationJob = typeof calibrationJobs.$inferSelect;
export type Upload = typeof uploads.$inferSelect;

// Teams that pay -----------------------------------------------------------------

/** An e-mailed invitation to join a team; only a SHA-256 hash of the link token is kept. */
export const invitations = pgTable(
	'invitation',
	{
		id: uuid('id').primaryKey().defaultRandom(),
		teamId: uuid('team_id')
			.notNull()
			.references(() => teams.id, { onDelete: 'cascade' }),
		/** lower-cased address the link was sent to */
		email: text('email').notNull(),
		role: roleEnum('role').notNull(),
		tokenHash: text('token_hash').notNull().unique(),
		invitedBy: text('invited_by').references(() => users.id, { onDelete: 'set null' }),
		createdAt: timestamp('created_at', { withTimezone: true }).notNull().defaultNow(),
		sentAt: timestamp('sent_at', { withTimezone: true }).notNull().defaultNow(),
		expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
		acceptedAt: timestamp('accepted_at', { withTimezone: true }),
		acceptedBy: text('accepted_by').references(() => users.id, { onDelete: 'set null' }),
		revokedAt: timestamp('revoked_at', { withTimezone: true })
	},
	// One open invitation per address and team; accepted and revoked ones stay as history.
	(t) => [index('invitation_team_idx').on(t.teamId), uniqueIndex('invitation_open_unique').on(t.teamId, t.email).where(sql`accepted_at is null and revoked_at is null`)]
);

/** Per-user mail choices; a missing row means the defaults. */
export const userPreferences = pgTable('user_preference', {
	userId: text('user_id')
		.primaryKey()
		.references(() => users.id, { onDelete: 'cascade' }),
	calibrationMail: boolean('calibration_mail').notNull().default(true),
	updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
});

/** A team's Stripe customer and subscription as last seen; no row means the Free tier. */
export const teamBilling = pgTable('team_billing', {
	teamId: uuid('team_id')
		.primaryKey()
		.references(() => teams.id, { onDelete: 'cascade' }),
	stripeCustomerId: text('stripe_customer_id').unique(),
	stripeSubscriptionId: text('stripe_subscription_id').unique(),
	subscriptionItemId: text('subscription_item_id'),
	/** Stripe's subscription status ('active', 'past_due', 'canceled', …) or 'none' */
	status: text('status').notNull().default('none'),
	seats: integer('seats').notNull().default(0),
	seatPriceCents: integer('seat_price_cents'),
	currency: text('currency'),
	currentPeriodEnd: timestamp('current_period_end', { withTimezone: true }),
	cancelAtPeriodEnd: boolean('cancel_at_period_end').notNull().default(false),
	/** `created` of the newest webhook event applied, so older events arriving late change nothing */
	lastEventAt: timestamp('last_event_at', { withTimezone: true }),
	updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow()
});

/** Every Stripe webhook event processed, keyed by its id so a repeat does nothing. */
export const stripeEvents = pgTable('stripe_event', {
	id: text('id').primaryKey(),
	type: text('type').notNull(),
	eventCreatedAt: timestamp('event_created_at', { withTimezone: true }).notNull(),
	/** 'applied', 'stale' (older than the state kept), 'ignored' (type not used) or 'no_team' */
	outcome: text('outcome').notNull(),
	receivedAt: timestamp('received_at', { withTimezone: true }).notNull().defaultNow()
});

/** Fixed-window counters shared by every web server (sign-in e-mails per address and per client). */
export const rateLimits = pgTable(
	'rate_limit',
	{
		key: text('key').notNull(),
		windowStart: timestamp('window_start', { withTimezone: true }).notNull(),
		hits: integer('hits').notNull().default(0)
	},
	(t) => [primaryKey({ columns: [t.key, t.windowStart] })]
);

export type Invitation = typeof invitations.$inferSelect;
export type TeamBilling = typeof teamBilling.$inferSelect;
