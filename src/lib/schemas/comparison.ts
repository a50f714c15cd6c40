/** A named comparison of plans of one team. */
import { z } from 'zod';

export const comparisonCreate = z.object({
	teamId: z.uuid({ error: 'teamId must be an id (UUID)' }),
	name: z.string({ error: 'name is required' }).trim().min(1, 'name is required').max(200, 'name must be at most 200 characters'),
	planIds: z
		.array(z.uuid({ error: 'planIds must hold plan ids (UUID)' }), { error: 'planIds must be a list of plan ids' })
		.min(2, 'pick at least two plans to compare')
		.max(12, 'compare at most 12 plans at once'),
	/** e-mail addresses of team members to tell about it */
	notify: z.array(z.email({ error: 'notify must hold e-mail addresses' })).max(50, 'notify at most 50 people').default([])
});
