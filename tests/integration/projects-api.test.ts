/** Projects through the JSON API: validation messages name the field, conflicts are 409, nothing saved is lost. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { client, signIn } from '../helpers/session.js';
import { addMember, closeDb, makeTeam, makeUser, unique } from '../helpers/factories.js';

let api: ReturnType<typeof client>;
let teamId: string;

beforeAll(async () => {
	const team = await makeTeam();
	const u = await makeUser('editor');
	await addMember(team.id, u.id, 'editor');
	teamId = team.id;
	api = client(await signIn(u.email!));
});
afterAll(closeDb);

describe('/api/projects', () => {
	it('creates, lists, renames and reads back a project', async () => {
		const name = unique('Churn model');
		const created = await api('/api/projects', { method: 'POST', json: { teamId, name, description: 'weekly' } });
		expect(created.status).toBe(201);
		const { project } = await created.json();
		expect(project).toMatchObject({ name, description: 'weekly', teamId });

		const listed = await (await api(`/api/projects?teamId=${teamId}`)).json();
		expect(listed.projects.map((p: { id: string }) => p.id)).toContain(project.id);

		const renamed = await api(`/api/projects/${project.id}`, { method: 'PATCH', json: { name: `${name} v2` } });
		expect(renamed.status).toBe(200);
		expect((await renamed.json()).project).toMatchObject({ name: `${name} v2`, description: 'weekly' });
	});

	it('rejects a missing name with a message naming the field', async () => {
		const res = await api('/api/projects', { method: 'POST', json: { teamId, name: '   ' } });
		expect(res.status).toBe(400);
		expect(await res.json()).toEqual({ error: { code: 'invalid', message: 'Invalid name: Name is required.', fields: { name: 'Name is required.' } } });
	});

	it('rejects malformed JSON clearly', async () => {
		const res = await api('/api/projects', { method: 'POST', body: '{"teamId":', headers: { 'content-type': 'application/json' } });
		expect(res.status).toBe(400);
		expect((await res.json()).error).toEqual({ code: 'invalid_json', message: 'The request body is not valid JSON.' });
	});

	it('answers 409 for a duplicate name in the same team (case-insensitive) and keeps the original', async () => {
		const name = unique('Fraud');
		const first = await (await api('/api/projects', { method: 'POST', json: { teamId, name, description: 'keep me' } })).json();
		const dup = await api('/api/projects', { method: 'POST', json: { teamId, name: name.toUpperCase() } });
		expect(dup.status).toBe(409);
		expect((await dup.json()).error).toMatchObject({ code: 'conflict', fields: { name: 'This name is taken in this team.' } });
		const again = await (await api(`/api/projects/${first.project.id}`)).json();
		expect(again.project.description).toBe('keep me');
	});

	it('answers 404 for unknown or malformed ids, and 400 for an empty update', async () => {
		expect((await api('/api/projects/00000000-0000-4000-8000-000000000000')).status).toBe(404);
		expect((await api('/api/projects/not-a-uuid')).status).toBe(404);
		const p = await (await api('/api/projects', { method: 'POST', json: { teamId, name: unique('Empty') } })).json();
		const res = await api(`/api/projects/${p.project.id}`, { method: 'PATCH', json: {} });
		expect(res.status).toBe(400);
		expect((await res.json()).error.message).toContain('Give a name or a description to change.');
	});

	it('names a bad teamId', async () => {
		const res = await api('/api/projects', { method: 'POST', json: { teamId: 'x', name: 'ok' } });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toEqual({ teamId: 'teamId must be a team id (UUID).' });
	});
});
