/** A dataset shape and training setup the benchmarks generate and train on. */
import type { Loss, ValueKind } from '../src/lib/engine/types.js';
import { generateToFile } from '../src/lib/engine/data/generate.js';

export interface DataShape {
	rows: number;
	features: number;
	k: number;
	p: number;
	values: ValueKind;
	loss: Loss;
	C: number;
}

/**
 * Binary rows of the shape (generator defaults for skew and noise), with other rows or features when given;
 * `indexRange` spreads the features over that many indices (the same rows up to relabelling).
 */
export async function writeShape(shape: DataShape, path: string, seed: number, size: { rows?: number; features?: number; indexRange?: number } = {}): Promise<void> {
	const features = size.features ?? shape.features;
	await generateToFile({ rows: size.rows ?? shape.rows, features, indexRange: size.indexRange ?? features, nnz: shape.k, positive: shape.p, values: shape.values, seed }, path, 'bin');
}
