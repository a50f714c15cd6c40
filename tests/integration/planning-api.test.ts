/** Plans, estimates, machines and comparisons through the JSON API. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { client, latestMail, signIn } from '../helpers/session.js';
import { addMember, closeDb, db, makeProject, makeTeam, makeUser, unique } from '../helpers/factories.js';
import { calibrations } from '../../src/lib/server/db/schema.js';
import { examplePlan, makeSavedPlan } from '../helpers/planning.js';
import { parsePlan } from '../../src/lib/schemas/plan.js';

let editor: ReturnType<typeof client>;
let viewer: ReturnType<typeof client>;
let teamId: string;
let projectId: string;
let otherProjectId: string;
let viewerEmail: string;

beforeAll(async () => {
	const team = await makeTeam();
	teamId = team.id;
	projectId = (await makeProject(team.id)).id;
	otherProjectId = (await makeProject(team.id)).id;
	const e = await makeUser('editor');
	const v = await makeUser('viewer');
	await addMember(team.id, e.id, 'editor');
	await addMember(team.id, v.id, 'viewer');
	viewerEmail = v.email!;
	editor = client(await signIn(e.email!));
	viewer = client(await signIn(v.email!));
});
afterAll(closeDb);

const withMachine = (change: Record<string, unknown>) => {
	const p = examplePlan();
	return { ...p, machine: { ...p.machine, ...change } };
};

describe('/api/estimate', () => {
	it('estimates every strategy with ranges, what-if curves, the basis and a caution', async () => {
		const res = await editor('/api/estimate', { method: 'POST', json: { plan: examplePlan(), teamId } });
		expect(res.status).toBe(200);
		const body = await res.json();
		expect(body.estimate.strategies.map((s: { strategy: string }) => s.strategy)).toEqual(['memory', 'block', 'selective', 'stream']);
		for (const s of body.estimate.strategies.filter((x: { feasible: boolean }) => x.feasible)) {
			expect(s.wallSeconds.p10).toBeLessThanOrEqual(s.wallSeconds.p50);
			expect(s.wallSeconds.p50).toBeLessThanOrEqual(s.wallSeconds.p90);
		}
		expect(body.calibration.source).toBe('built-in');
		expect(body.caution).toContain('pilot run');
		expect(body.whatIf.ramGiB.current).toBe(16);
		expect(body.whatIf.ramGiB.points.some((p: { x: number }) => p.x === 16)).toBe(true);
		// disk what-if stops at the interface's line rate: SATA revision 3, 6 Gb/s with 8b/10b coding = 600 MB/s (SATA-IO specification)
		expect(Math.max(...body.whatIf.diskMBps.points.map((p: { x: number }) => p.x))).toBeLessThanOrEqual(600);
	});

	it('says why memory does not fit on a small machine', async () => {
		const res = await editor('/api/estimate', { method: 'POST', json: { plan: withMachine({ ramGiB: 1 }), teamId } });
		const memory = (await res.json()).estimate.strategies.find((s: { strategy: string }) => s.strategy === 'memory');
		expect(memory.feasible).toBe(false);
		expect(memory.reason).toMatch(/needs .* machine has/);
	});

	it('names the field of a bad plan', async () => {
		const plan = examplePlan();
		plan.dataset.nnzPerRow = plan.dataset.features + 1;
		const res = await editor('/api/estimate', { method: 'POST', json: { plan, teamId } });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toEqual({ 'plan.dataset.nnzPerRow': 'dataset.nnzPerRow must be at most dataset.features' });
	});

	it('answers 404 for another team', async () => {
		const other = await makeTeam();
		expect((await editor('/api/estimate', { method: 'POST', json: { plan: examplePlan(), teamId: other.id } })).status).toBe(404);
	});

	// the editor's keystroke request: the same estimate without the curves (self-consistency, no outside source)
	it('leaves out the what-if curves with whatIf: false and gives the same estimate', async () => {
		const plan = withMachine({ ramGiB: 48 });
		const plain = await editor('/api/estimate', { method: 'POST', json: { plan, teamId, whatIf: false } });
		expect(plain.status).toBe(200);
		const body = await plain.json();
		expect(body).not.toHaveProperty('whatIf');
		const full = await (await editor('/api/estimate', { method: 'POST', json: { plan, teamId, whatIf: true } })).json();
		expect(full.whatIf.ramGiB.current).toBe(48);
		expect(body.estimate).toEqual(full.estimate);
		expect(body.calibration).toEqual(full.calibration);
	});

	it('names whatIf when it is not true or false', async () => {
		const res = await editor('/api/estimate', { method: 'POST', json: { plan: examplePlan(), teamId, whatIf: 'yes' } });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toEqual({ whatIf: 'whatIf must be true or false' });
	});

	it('rests at once on a calibration the request names, though the lookup of its shape was just made', async () => {
		const plan = withMachine({ ramGiB: 24 });
		expect((await (await editor('/api/estimate', { method: 'POST', json: { plan, teamId, whatIf: false } })).json()).calibration.id).toBe('built-in');
		const record = JSON.parse(readFileSync(new URL('../../src/lib/server/baseline-calibration.json', import.meta.url), 'utf8'));
		const [row] = await db().insert(calibrations).values({ teamId, shapeKey: 'named-only', record }).returning();
		const named = await (await editor('/api/estimate', { method: 'POST', json: { plan, teamId, whatIf: false, calibrationId: row.id } })).json();
		expect(named.calibration).toMatchObject({ id: row.id, source: 'synthetic', sameShape: false });
	});
});

describe('/api/plans', () => {
	it('creates a plan with an estimate snapshot, keeps a revision per save, exports PLAN.json that parses', async () => {
		const name = unique('Nightly churn');
		const created = await editor('/api/plans', { method: 'POST', json: { projectId, name, plan: examplePlan() } });
		expect(created.status).toBe(201);
		const { plan } = await created.json();
		expect(plan).toMatchObject({ name, projectId });
		expect(plan.recommended).toBeTruthy();
		expect(plan.p10Seconds).toBeLessThanOrEqual(plan.p50Seconds);

		const saved = await editor(`/api/plans/${plan.id}`, { method: 'PATCH', json: { plan: withMachine({ ramGiB: 64 }) } });
		expect(saved.status).toBe(200);
		const detail = await (await editor(`/api/plans/${plan.id}`)).json();
		expect(detail.revisions).toHaveLength(2);
		expect(detail.plan.input.machine.ramGiB).toBe(64);

		const file = await editor(`/api/plans/${plan.id}?format=plan`);
		expect(file.headers.get('content-disposition')).toContain('attachment');
		const parsed = parsePlan(await file.text());
		expect(parsed.ok).toBe(true);
		if (parsed.ok) expect(parsed.plan).toMatchObject({ name, machine: { ramGiB: 64 } });
	});

	it('imports a PLAN.json taking its name, and refuses a duplicate name with 409', async () => {
		const name = unique('Imported');
		const res = await editor('/api/plans', { method: 'POST', json: { projectId, plan: { ...examplePlan(), name } } });
		expect(res.status).toBe(201);
		const again = await editor('/api/plans', { method: 'POST', json: { projectId, plan: { ...examplePlan(), name: name.toUpperCase() } } });
		expect(again.status).toBe(409);
		expect((await again.json()).error.fields).toEqual({ name: 'This name is taken in this project.' });
	});

	it('rejects an unknown plan field and a plan without a name, naming them', async () => {
		const extra = await editor('/api/plans', { method: 'POST', json: { projectId, name: 'x', plan: { ...examplePlan(), gpu: true } } });
		expect(extra.status).toBe(400);
		expect((await extra.json()).error.fields).toEqual({ 'plan.gpu': 'gpu is not a known field' });
		const p = examplePlan();
		delete p.name;
		const nameless = await editor('/api/plans', { method: 'POST', json: { projectId, plan: p } });
		expect(nameless.status).toBe(400);
		expect((await nameless.json()).error.fields).toEqual({ name: 'name is required' });
	});

	it('duplicates a plan under a free name', async () => {
		const original = await makeSavedPlan(teamId, projectId);
		const a = await (await editor('/api/plans', { method: 'POST', json: { duplicateOf: original.id } })).json();
		const b = await (await editor('/api/plans', { method: 'POST', json: { duplicateOf: original.id } })).json();
		expect(a.plan.name).toBe(`${original.name} (copy)`);
		expect(b.plan.name).toBe(`${original.name} (copy 2)`);
	});

	it('sorts, filters and pages on the server, treating SQL-looking text as text', async () => {
		const sneaky = `x'; drop table plan; -- ${unique('s')}`;
		await editor('/api/plans', { method: 'POST', json: { projectId: otherProjectId, name: sneaky, plan: examplePlan() } });
		await editor('/api/plans', { method: 'POST', json: { projectId: otherProjectId, name: '100% sure_', plan: withMachine({ ramGiB: 1 }) } });
		const found = await (await editor(`/api/plans?projectId=${otherProjectId}&q=${encodeURIComponent("'; drop")}`)).json();
		expect(found.rows.map((r: { name: string }) => r.name)).toEqual([sneaky]);
		// LIKE wildcards in a filter match themselves only
		const pct = await (await editor(`/api/plans?projectId=${otherProjectId}&q=${encodeURIComponent('0%')}`)).json();
		expect(pct.rows.map((r: { name: string }) => r.name)).toEqual(['100% sure_']);
		const sorted = await (await editor(`/api/plans?projectId=${otherProjectId}&sort=name&dir=asc&pageSize=1&page=2`)).json();
		expect(sorted).toMatchObject({ total: 2, page: 2, pages: 2 });
		expect(sorted.rows[0].name).toBe(sneaky);
		const bad = await editor(`/api/plans?projectId=${otherProjectId}&sort=${encodeURIComponent('name; drop table plan')}`);
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields.sort).toContain('sort must be one of');
	});

	it('exports the project as CSV with formulas neutralised', async () => {
		await editor('/api/plans', { method: 'POST', json: { projectId: otherProjectId, name: '=HYPERLINK("x")', plan: examplePlan() } });
		const res = await editor(`/api/plans?projectId=${otherProjectId}&format=csv`);
		expect(res.headers.get('content-type')).toContain('text/csv');
		const text = await res.text();
		expect(text.split('\r\n')[0]).toBe('name,recommended,sweep_p10_seconds,sweep_p50_seconds,sweep_p90_seconds,sweep_cost_p50,deadline_verdict,rows,features,nnz_per_row,ram_gib,disk_mbps,loss,C,author,updated');
		expect(text).toContain(`"'=HYPERLINK(""x"")"`);
	});

	it('lets a viewer read and export but not write', async () => {
		const p = await makeSavedPlan(teamId, projectId);
		expect((await viewer(`/api/plans/${p.id}`)).status).toBe(200);
		expect((await viewer(`/api/plans/${p.id}?format=plan`)).status).toBe(200);
		expect((await viewer(`/api/plans/${p.id}`, { method: 'PATCH', json: { name: 'mine now' } })).status).toBe(403);
		expect((await viewer(`/api/plans/${p.id}`, { method: 'DELETE' })).status).toBe(403);
	});
});

describe('/api/machines', () => {
	it('accepts a probe-machine profile and refuses a disk faster than its interface', async () => {
		// the real output of `npm run -s loadline -- probe-machine --json`, recorded on the development machine
		const probe = JSON.parse(readFileSync(new URL('../fixtures/machine-probe.json', import.meta.url), 'utf8'));
		const ok = await editor('/api/machines', { method: 'POST', json: { teamId, name: unique('probed'), probe } });
		expect(ok.status).toBe(201);
		expect((await ok.json()).machine.source).toBe('probe');
		// SATA revision 3: 6 Gb/s line rate with 8b/10b coding, so at most 600 MB/s (SATA-IO specification)
		const bad = await editor('/api/machines', { method: 'POST', json: { teamId, name: unique('too fast'), profile: { ramGiB: 8, diskMBps: 700, diskInterface: 'sata3', cores: 2, coreSpeed: 1 } } });
		expect(bad.status).toBe(400);
		expect((await bad.json()).error.fields['profile.diskMBps']).toContain('must be at most 600');
	});

	it('retires a machine: it leaves the list the editor uses and stays readable', async () => {
		const made = await (await editor('/api/machines', { method: 'POST', json: { teamId, name: unique('old'), profile: { ramGiB: 8, diskMBps: 100, diskInterface: 'hdd', cores: 2, coreSpeed: 1 } } })).json();
		await editor(`/api/machines/${made.machine.id}`, { method: 'PATCH', json: { retired: true } });
		const active = await (await editor(`/api/machines?teamId=${teamId}`)).json();
		expect(active.machines.map((m: { id: string }) => m.id)).not.toContain(made.machine.id);
		const all = await (await editor(`/api/machines?teamId=${teamId}&retired=1`)).json();
		expect(all.machines.map((m: { id: string }) => m.id)).toContain(made.machine.id);
	});
});

describe('/api/comparisons', () => {
	it('saves a comparison of plans across projects and tells a member by e-mail', async () => {
		const a = await makeSavedPlan(teamId, projectId);
		const b = await makeSavedPlan(teamId, otherProjectId, withMachine({ ramGiB: 64 }));
		const before = Date.now();
		const res = await viewer('/api/comparisons', { method: 'POST', json: { teamId, name: 'RAM options', planIds: [a.id, b.id], notify: [viewerEmail] } });
		expect(res.status).toBe(201);
		const { comparison } = await res.json();
		const { table } = await (await editor(`/api/comparisons/${comparison.id}`)).json();
		expect(table.plans.map((p: { id: string }) => p.id)).toEqual([a.id, b.id]);
		expect(table.inputs.find((r: { path: string }) => r.path === 'machine.ramGiB')).toMatchObject({ values: [16, 64], differs: true });
		expect(table.inputs.find((r: { path: string }) => r.path === 'dataset.rows').differs).toBe(false);
		const mail = await latestMail(viewerEmail, before);
		expect(mail.text).toContain(`/teams/${teamId}/compare/${comparison.id}`);
	});

	it("refuses another team's plans and a non-member to notify", async () => {
		const other = await makeTeam();
		const foreign = await makeSavedPlan(other.id, (await makeProject(other.id)).id);
		const mine = await makeSavedPlan(teamId, projectId);
		const res = await editor('/api/comparisons', { method: 'POST', json: { teamId, name: 'x', planIds: [mine.id, foreign.id] } });
		expect(res.status).toBe(400);
		expect((await res.json()).error.fields).toEqual({ planIds: 'every plan must belong to this team' });
		const mine2 = await makeSavedPlan(teamId, projectId);
		const stranger = await editor('/api/comparisons', { method: 'POST', json: { teamId, name: 'x', planIds: [mine.id, mine2.id], notify: ['nobody@example.org'] } });
		expect(stranger.status).toBe(400);
		expect((await stranger.json()).error.message).toContain('nobody@example.org is not a member');
		const one = await editor('/api/comparisons', { method: 'POST', json: { teamId, name: 'x', planIds: [mine.id] } });
		expect((await one.json()).error.fields.planIds).toBe('pick at least two plans to compare');
	});
});
