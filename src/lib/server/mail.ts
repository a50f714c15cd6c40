/** Outgoing mail through SMTP_URL (the local fake inbox by default). */
import { env } from '$env/dynamic/private';
import { createTransport, type Transporter } from 'nodemailer';

let transport: Transporter | null = null;

export function smtpUrl(): string {
	return env.SMTP_URL ?? 'smtp://127.0.0.1:1025';
}

export function mailFrom(): string {
	return env.MAIL_FROM ?? 'Loadline <no-reply@loadline.test>';
}

export async function send(message: { to: string; subject: string; text: string; html: string }): Promise<void> {
	transport ??= createTransport(smtpUrl());
	const result = await transport.sendMail({ from: mailFrom(), ...message });
	const failed = [...(result.rejected ?? []), ...(result.pending ?? [])];
	if (failed.length) throw new Error(`mail to ${failed.join(', ')} could not be sent`);
}

const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

/** The sign-in letter, in Loadline's own words. */
export function signInLetter(url: string, minutes: number) {
	return {
		subject: 'Your Loadline sign-in link',
		text: `Open this link to sign in to Loadline:\n\n${url}\n\nIt works once and expires in ${minutes} minutes. If you did not ask for it, ignore this message.\n`,
		html: `<div style="font-family:sans-serif;color:#12355b"><p>Open this link to sign in to <b>Loadline</b>:</p><p><a href="${escape(url)}" style="background:#12355b;color:#fff;padding:8px 14px;border-radius:6px;text-decoration:none">Sign in to Loadline</a></p><p style="color:#555">It works once and expires in ${minutes} minutes. If you did not ask for it, ignore this message.</p></div>`
	};
}
