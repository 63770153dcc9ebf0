// Raw uploads kept byte for byte in PostgreSQL: written in ~1 MiB chunks as a file streams in, read back one chunk at a time.
import { createHash } from 'node:crypto';
import type { Transaction } from 'sequelize';
import { RawUploadChunk } from '../db/models';

/** Size of one stored chunk; a file is split at these boundaries whatever the network's packet sizes were. */
export const RAW_CHUNK_BYTES = 1024 * 1024;

/** Appends one chunk of an upload (the raw_uploads row may follow later in the same transaction: the key is deferred). */
export async function writeRawChunk(uploadId: string, seq: number, bytes: Buffer, transaction: Transaction): Promise<void> {
	// the model inserts with bind parameters, so pg sends the Buffer as binary instead of a hex literal twice its size
	await RawUploadChunk.create({ uploadId, seq, bytes }, { transaction, returning: false });
}

/**
 * The stored bytes of an upload, chunk by chunk in order (never the whole file at once). With `expectSha256`
 * the hash of what was read is compared at the end and a mismatch throws, so a reader never trusts damaged data.
 */
export async function* readRaw(uploadId: string, opts: { expectSha256?: string; transaction?: Transaction } = {}): AsyncIterable<Buffer> {
	const hash = opts.expectSha256 ? createHash('sha256') : null;
	for (let seq = 0; ; seq++) {
		const chunk = await RawUploadChunk.findOne({ where: { uploadId, seq }, attributes: ['bytes'], transaction: opts.transaction });
		if (!chunk) break;
		hash?.update(chunk.bytes);
		yield chunk.bytes;
	}
	if (hash && hash.digest('hex') !== opts.expectSha256)
		throw new Error(`raw upload ${uploadId}: the stored bytes do not match their SHA-256 (${opts.expectSha256})`);
}
