/** Result e-mails the planning side sends: calibration finished (with a per-user opt-out) and comparison shared. */
import { afterAll, beforeAll, describe, expect, it, inject, vi } from 'vitest';
import { baseUrl, client, latestMail, linkIn, signIn } from '../helpers/session.js';
import { closeDb, db, makeUser } from '../helpers/factories.js';
import { userPreferences } from '../../src/lib/server/db/schema.js';
import { action } from '../helpers/forms.js';

// server modules read SvelteKit's private env; here it is this process's environment, set below
vi.mock('$env/dynamic/private', () => ({ env: process.env }));

type Notifications = typeof import('../../src/lib/server/notifications.js');
let notify: Notifications;

beforeAll(async () => {
	// the module reads its settings from the environment, as the app and the worker do
	process.env.DATABASE_URL = inject('databaseUrl');
	process.env.SMTP_URL = inject('smtpUrl');
	process.env.ORIGIN = baseUrl();
	notify = await import('../../src/lib/server/notifications.js');
});
afterAll(closeDb);

describe('notifications', () => {
	it('mails "your calibration finished" with an absolute link, and stops after the user turns it off in settings', async () => {
		const u = await makeUser('calibrator');
		const before = Date.now();
		expect(await notify.notifyCalibrationFinished(u.id, 'Nightly sweep', '/teams/t/plans/p')).toEqual({ sent: true });
		const mail = await latestMail(u.email!, before);
		expect(mail.subject).toBe('Calibration finished: Nightly sweep');
		expect(linkIn(mail)).toBe(`${baseUrl()}/teams/t/plans/p`);
		expect(mail.text).toContain(`${baseUrl()}/settings`);

		const cookie = await signIn(u.email!);
		expect(await (await client(cookie)('/settings')).text()).toContain('checked');
		expect((await action(cookie, '/settings?/save', {})).status).toBe(200);
		expect(await notify.notifyCalibrationFinished(u.id, 'Nightly sweep', '/x')).toEqual({ sent: false, reason: 'opted_out' });
		expect((await action(cookie, '/settings?/save', { calibrationMail: 'on' })).status).toBe(200);
		expect(await notify.notifyCalibrationFinished(u.id, 'Nightly sweep', '/x')).toEqual({ sent: true });
	});

	it('mails "a comparison was shared with you" naming who shared it', async () => {
		const u = await makeUser('reviewer');
		const before = Date.now();
		expect(await notify.notifyComparisonShared(u.id, 'Dana Demo', 'Three machines', '/teams/t/compare/c')).toEqual({ sent: true });
		const mail = await latestMail(u.email!, before);
		expect(mail.subject).toBe('Dana Demo shared a comparison with you: Three machines');
		expect(linkIn(mail)).toBe(`${baseUrl()}/teams/t/compare/c`);
		expect(await notify.notifyComparisonShared('no-such-user', 'x', 'y', '/z')).toEqual({ sent: false, reason: 'no_address' });
	});

	it('works outside SvelteKit too, as the queue worker uses it, with the same opt-out', async () => {
		const { createNotifier } = await import('../../src/lib/server/notify.js');
		const worker = createNotifier(db(), { smtpUrl: inject('smtpUrl'), origin: baseUrl() });
		const u = await makeUser('worker-side');
		const before = Date.now();
		expect(await worker.notifyCalibrationFinished(u.id, 'Weekly', '/p')).toEqual({ sent: true });
		expect((await latestMail(u.email!, before)).subject).toBe('Calibration finished: Weekly');
		await db().insert(userPreferences).values({ userId: u.id, calibrationMail: false });
		expect(await worker.notifyCalibrationFinished(u.id, 'Weekly', '/p')).toEqual({ sent: false, reason: 'opted_out' });
	});
});
