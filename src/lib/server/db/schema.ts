/** Every table of Loadline. Migrations in drizzle/ are generated from this file by drizzle-kit. */
import { sql } from 'drizzle-orm';
import { integer, pgEnum, pgTable, primaryKey, text, timestamp, uniqueIndex, uuid, index, boolean } from 'drizzle-orm/pg-core';

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

export type Role = (typeof roleEnum.enumValues)[number];
export type Team = typeof teams.$inferSelect;
export type Project = typeof projects.$inferSelect;
export type User = typeof users.$inferSelect;
