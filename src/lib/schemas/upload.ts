/** What a sample upload names about itself (query parameters of POST /api/uploads, fields of the upload form). */
import { z } from 'zod';

export const SAMPLE_KINDS = ['svmlight', 'csv'] as const;

export const uploadParams = z
	.object({
		teamId: z.uuid({ error: 'teamId must be a team id' }),
		fileName: z
			.string({ error: 'fileName is required' })
			.trim()
			.min(1, 'fileName is required')
			.max(200, 'fileName must be at most 200 characters')
			// the name is only shown, never used as a path; still, a name with a path in it is a mistake worth saying
			.refine((s) => !/[/\\]/.test(s), 'fileName must be a file name without folders (no / or \\)')
			.refine((s) => !/[\u0000-\u001f]/.test(s) && s !== '.' && s !== '..', 'fileName holds characters a file name cannot have'),
		kind: z.enum(SAMPLE_KINDS, { error: 'kind must be one of svmlight, csv' }),
		labelColumn: z.string().trim().max(200, 'labelColumn must be at most 200 characters').optional()
	})
	.superRefine((u, ctx) => {
		if (u.kind === 'csv' && !u.labelColumn) ctx.addIssue({ code: 'custom', path: ['labelColumn'], message: 'labelColumn is required for CSV: the name of the column holding the labels' });
	});

export type UploadParams = z.infer<typeof uploadParams>;
