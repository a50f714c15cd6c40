/** Sign-in: Auth.js with e-mail magic links and database sessions. */
import { SvelteKitAuth } from '@auth/sveltekit';
import Nodemailer from '@auth/sveltekit/providers/nodemailer';
import { DrizzleAdapter } from '@auth/drizzle-adapter';
import { db } from '$lib/server/db/index.js';
import { accounts, sessions, users, verificationTokens } from '$lib/server/db/schema.js';
import * as mail from '$lib/server/mail.js';
import * as teams from '$lib/server/teams.js';

/** A magic link works once and for this long. */
export const LINK_MINUTES = 15;

export const { handle, signIn, signOut } = SvelteKitAuth({
	adapter: DrizzleAdapter(db, {
		usersTable: users,
		accountsTable: accounts,
		sessionsTable: sessions,
		verificationTokensTable: verificationTokens
	}),
	providers: [
		Nodemailer({
			server: mail.smtpUrl(),
			from: mail.mailFrom(),
			maxAge: LINK_MINUTES * 60,
			async sendVerificationRequest({ identifier, url }) {
				await mail.send({ to: identifier, ...mail.signInLetter(url, LINK_MINUTES) });
			}
		})
	],
	session: { strategy: 'database', maxAge: 30 * 24 * 60 * 60 },
	pages: { signIn: '/signin', verifyRequest: '/signin/check-email', error: '/signin/problem' },
	trustHost: true,
	events: {
		async createUser({ user }) {
			if (user.id) await teams.createPersonal({ id: user.id, name: user.name, email: user.email });
		}
	},
	callbacks: {
		session({ session, user }) {
			session.user.id = user.id;
			return session;
		}
	}
});
