/** PostgreSQL error codes the data modules turn into clear API errors. */

/** A unique constraint refused the row (SQLSTATE 23505); drizzle may wrap the driver's error in `cause`. */
export function isUniqueViolation(e: unknown): boolean {
	const err = e as { code?: string; cause?: { code?: string } } | null;
	return err?.code === '23505' || err?.cause?.code === '23505';
}
