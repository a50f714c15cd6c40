/** Running dataset statistics (DatasetProfile) shared by the generator, the text parser and the binary profiler. */
import type { DatasetProfile, ValueKind } from '../types.js';

/** A profile plus the totals it was computed from. */
export interface DataProfile extends DatasetProfile {
	/** stored nonzeros over all rows */
	nnz: number;
	/** on-disk form the profile was read from */
	format: 'svm' | 'bin';
}

export class ProfileStats {
	rows = 0;
	positives = 0;
	nnz = 0;
	/** sum of squared row lengths, for the spread */
	nnzSq = 0;
	/** largest 0-based index seen, -1 when none */
	maxIndex = -1;
	/** false once a stored value other than 1 is seen */
	allOnes = true;

	add(label: number, length: number, lastIndex: number): void {
		this.rows++;
		if (label > 0) this.positives++;
		this.nnz += length;
		this.nnzSq += length * length;
		if (lastIndex > this.maxIndex) this.maxIndex = lastIndex;
	}

	finish(bytes: number, format: 'svm' | 'bin', valueKind?: ValueKind): DataProfile {
		const n = this.rows;
		const mean = n > 0 ? this.nnz / n : 0;
		const variance = n > 0 ? Math.max(0, this.nnzSq / n - mean * mean) : 0;
		return {
			rows: n,
			maxFeature: this.maxIndex + 1,
			nnzMean: mean,
			nnzStd: Math.sqrt(variance),
			positiveFraction: n > 0 ? this.positives / n : 0,
			bytesPerRow: n > 0 ? bytes / n : 0,
			valueKind: valueKind ?? (this.allOnes ? 'binary' : 'real'),
			bytes,
			nnz: this.nnz,
			format
		};
	}
}
