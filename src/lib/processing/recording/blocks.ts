// Storage of a parse: numbers and line numbers in fixed blocks, copied once into exact-length arrays at the end.

/**
 * Float64 storage in fixed blocks, so a long file never becomes a JS array of numbers and never needs the
 * doubling copy (old + new buffer at once); take() copies block by block into one exact-length array.
 */
const BLOCK = 1 << 15;
export class Column {
	private blocks: Float64Array[] = [];
	private last = new Float64Array(BLOCK);
	private fill = 0;
	n = 0;
	push(v: number): void {
		if (this.fill === BLOCK) {
			this.blocks.push(this.last);
			this.last = new Float64Array(BLOCK);
			this.fill = 0;
		}
		this.last[this.fill++] = v;
		this.n++;
	}
	take(): Float64Array {
		const out = new Float64Array(this.n);
		let at = 0;
		for (const b of this.blocks) {
			out.set(b, at);
			at += BLOCK;
		}
		out.set(this.last.subarray(0, this.fill), at);
		this.blocks = [];
		this.last = new Float64Array(0);
		return out;
	}
}

/** Line numbers of samples (blank lines make them differ from index + 2), in blocks like Column. */
export class LineNumbers {
	private blocks: Uint32Array[] = [new Uint32Array(BLOCK)];
	n = 0;
	push(v: number): void {
		const k = Math.floor(this.n / BLOCK);
		if (k === this.blocks.length) this.blocks.push(new Uint32Array(BLOCK));
		this.blocks[k][this.n % BLOCK] = v;
		this.n++;
	}
	at(i: number): number {
		return this.blocks[Math.floor(i / BLOCK)][i % BLOCK];
	}
}
