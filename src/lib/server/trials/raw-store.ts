// Raw uploads kept byte for byte in PostgreSQL: written in ~1 MiB chunks as a file streams in, read back one chunk at a time.
import { createHash } from 'node:crypto';
import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '../db/index';

/** Size of one stored chunk; a file is split at these boundaries whatever the network's packet sizes were. */
export const RAW_CHUNK_BYTES = 1024 * 1024;

/** Appends one chunk of an upload (the raw_uploads row may follow later in the same transaction: the key is deferred). */
export async function writeRawChunk(uploadId: string, seq: number, bytes: Buffer, transaction: Transaction): Promise<void> {
	// a bind parameter, so pg sends the Buffer as binary instead of a hex literal twice its size
	await db().query('INSERT INTO raw_upload_chunks (upload_id, seq, bytes) VALUES ($1, $2, $3)', { bind: [uploadId, seq, bytes], type: QueryTypes.INSERT, transaction });
}

/**
 * The stored bytes of an upload, chunk by chunk in order (never the whole file at once). With `expectSha256`
 * the hash of what was read is compared at the end and a mismatch throws, so a reader never trusts damaged data.
 */
export async function* readRaw(uploadId: string, opts: { expectSha256?: string; transaction?: Transaction } = {}): AsyncIterable<Buffer> {
	const hash = opts.expectSha256 ? createHash('sha256') : null;
	for (let seq = 0; ; seq++) {
		const rows = await db().query<{ bytes: Buffer }>('SELECT bytes FROM raw_upload_chunks WHERE upload_id = $1 AND seq = $2', {
			bind: [uploadId, seq],
			type: QueryTypes.SELECT,
			transaction: opts.transaction
		});
		if (rows.length === 0) break;
		hash?.update(rows[0].bytes);
		yield rows[0].bytes;
	}
	if (hash && hash.digest('hex') !== opts.expectSha256) throw new Error(`raw upload ${uploadId}: the stored bytes do not match their SHA-256 (${opts.expectSha256})`);
}
