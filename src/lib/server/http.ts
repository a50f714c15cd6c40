/** JSON API helpers: every error leaves as { "error": { "code", "message", "fields"? } }. */
import { isHttpError, isRedirect, json, type RequestEvent, type RequestHandler } from '@sveltejs/kit';
import type { z } from 'zod';

export type Fields = Record<string, string>;

export class ApiError extends Error {
	constructor(
		readonly status: number,
		readonly code: string,
		message: string,
		readonly fields?: Fields
	) {
		super(message);
	}
}

export function errorBody(code: string, message: string, fields?: Fields) {
	return { error: fields ? { code, message, fields } : { code, message } };
}

/** Wrap a handler so thrown errors become the JSON error shape with the right status. */
export function api(handler: (event: RequestEvent) => Promise<Response>): RequestHandler {
	return async (event) => {
		try {
			return await handler(event);
		} catch (e) {
			if (e instanceof ApiError) return json(errorBody(e.code, e.message, e.fields), { status: e.status });
			if (isHttpError(e)) return json(errorBody(e.body.code ?? codeFor(e.status), e.body.message), { status: e.status });
			if (isRedirect(e)) throw e;
			console.error(e);
			return json(errorBody('internal', 'Something went wrong on our side; nothing was changed.'), { status: 500 });
		}
	};
}

function codeFor(status: number) {
	return ({ 400: 'invalid', 401: 'unauthenticated', 403: 'forbidden', 404: 'not_found', 409: 'conflict' } as Record<number, string>)[status] ?? 'error';
}

/** The request body as JSON; a 400 when it is not JSON. */
export async function readJson(event: RequestEvent): Promise<unknown> {
	try {
		return await event.request.json();
	} catch {
		throw new ApiError(400, 'invalid_json', 'The request body is not valid JSON.');
	}
}

/** Check a value against a schema; a 400 names each bad field. */
export function check<S extends z.ZodType>(raw: unknown, schema: S): z.infer<S> {
	const parsed = schema.safeParse(raw);
	if (!parsed.success) {
		const fields = fieldErrors(parsed.error);
		throw new ApiError(400, 'invalid', `Invalid ${Object.keys(fields).join(', ') || 'body'}: ${Object.values(fields)[0] ?? 'bad input'}`, fields);
	}
	return parsed.data;
}

/** Parse a JSON body against a schema; a 400 names each bad field. */
export async function body<S extends z.ZodType>(event: RequestEvent, schema: S): Promise<z.infer<S>> {
	return check(await readJson(event), schema);
}

/** zod issues as { "a.b": "message" }, first message per field. */
export function fieldErrors(err: z.ZodError): Fields {
	const out: Fields = {};
	for (const issue of err.issues) {
		const key = issue.path.join('.') || '_';
		// name each unknown key instead of zod's generic "Unrecognized key"
		if (issue.code === 'unrecognized_keys') for (const k of issue.keys) out[key === '_' ? k : `${key}.${k}`] ??= `${k} is not a known field`;
		else out[key] ??= issue.message;
	}
	return out;
}

/** Parse URL query parameters against a schema; a 400 names each bad parameter. */
export function query<S extends z.ZodType>(params: URLSearchParams, schema: S): z.infer<S> {
	const parsed = schema.safeParse(Object.fromEntries(params));
	if (!parsed.success) {
		const fields = fieldErrors(parsed.error);
		throw new ApiError(400, 'invalid', `Invalid ${Object.keys(fields).join(', ')}: ${Object.values(fields)[0]}`, fields);
	}
	return parsed.data;
}
