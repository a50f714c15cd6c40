/** The e-mails about teams and results, in Loadline's own words; sign-in mail lives in mail.ts. */

const escape = (s: string) => s.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);

function letter(subject: string, lines: string[], button: { label: string; url: string }, footer: string) {
	return {
		subject,
		text: `${lines.join('\n\n')}\n\n${button.url}\n\n${footer}\n`,
		html: `<div style="font-family:sans-serif;color:#12355b">${lines.map((l) => `<p>${escape(l)}</p>`).join('')}<p><a href="${escape(button.url)}" style="background:#12355b;color:#fff;padding:8px 14px;border-radius:6px;text-decoration:none">${escape(button.label)}</a></p><p style="color:#555">${escape(footer)}</p></div>`
	};
}

export function invitation(o: { teamName: string; invitedBy: string; role: string; url: string; hours: number }) {
	return letter(
		`You are invited to ${o.teamName} on Loadline`,
		[`${o.invitedBy} invites you to join the team "${o.teamName}" on Loadline as ${o.role}.`, 'Open this link to accept. If you have no Loadline account yet, you sign in with this address first; the invitation waits for you.'],
		{ label: 'Accept the invitation', url: o.url },
		`The link works once and expires in ${o.hours} hours. If you did not expect it, ignore this message.`
	);
}

export function calibrationFinished(o: { planName: string; url: string; settingsUrl: string }) {
	return letter(
		`Calibration finished: ${o.planName}`,
		[`The calibration for your plan "${o.planName}" has finished. The plan's estimate now rests on the new measurements.`],
		{ label: 'Open the plan', url: o.url },
		`You get this because you started the calibration. Turn these messages off in your settings: ${o.settingsUrl}`
	);
}

export function comparisonShared(o: { sharedBy: string; name: string; url: string }) {
	return letter(
		`${o.sharedBy} shared a comparison with you: ${o.name}`,
		[`${o.sharedBy} shared the comparison "${o.name}" with you on Loadline.`],
		{ label: 'Open the comparison', url: o.url },
		'You can open it while you are a member of its team.'
	);
}
