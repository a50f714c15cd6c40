/** Post to a SvelteKit form action the way use:enhance does and unwrap its JSON envelope. */
import { client } from './session.js';

export interface ActionResult {
	/** 303 for a redirect, else the action's status */
	status: number;
	type: 'success' | 'failure' | 'redirect' | 'error';
	data: Record<string, unknown> | null;
	location?: string;
}

export async function action(cookie: string | null, path: string, fields: Record<string, string> = {}): Promise<ActionResult> {
	const res = await client(cookie)(path, {
		method: 'POST',
		body: new URLSearchParams(fields),
		headers: { 'content-type': 'application/x-www-form-urlencoded', 'x-sveltekit-action': 'true', accept: 'application/json' }
	});
	const envelope = (await res.json()) as { type: ActionResult['type']; status?: number; data?: string; location?: string; error?: { message: string } };
	// SvelteKit serialises action data with devalue; the flat objects used here survive JSON.parse of its array form.
	const data = envelope.data ? devalueObject(envelope.data) : envelope.error ? { error: envelope.error.message } : null;
	const status = envelope.type === 'redirect' ? 303 : envelope.type === 'success' ? 200 : (envelope.status ?? res.status);
	return { status, type: envelope.type, data, location: envelope.location };
}

/** Decode devalue's flat form: index 0 is the root; numbers in objects and arrays point to other entries. */
function devalueObject(serialised: string): Record<string, unknown> {
	const table = JSON.parse(serialised) as unknown[];
	const decode = (i: number): unknown => {
		if (i < 0) return i === -1 ? undefined : null;
		const v = table[i];
		if (Array.isArray(v)) return typeof v[0] === 'string' && v.length === 2 && v[0] === 'Date' ? new Date(v[1] as string) : v.map((j) => decode(j as number));
		if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, j]) => [k, decode(j as number)]));
		return v;
	};
	return decode(0) as Record<string, unknown>;
}
