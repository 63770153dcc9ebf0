// The streamed trial upload: multipart parsed by busboy straight from the request, each file hashed, stored in
// 1 MiB chunks and parsed as it arrives, all in one transaction per file, so a rejected file leaves only an audit entry.
import busboy from 'busboy';
import { createHash, randomUUID } from 'node:crypto';
import { basename } from 'node:path';
import { Readable } from 'node:stream';
import { UniqueConstraintError, type Transaction } from 'sequelize';
import { db } from '../db/index';
import { MappingPreset, Participant, RawUpload, Session, Trial } from '../db/models';
import { may, studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { config } from '../config';
import { conflict, DomainError, isDomainError } from '../errors';
import { isUuid } from '../studies/studies';
import { requireValidConsent } from '../consent/check';
import { EDITABLE_STATES, participantBodyOf, sessionIn, trialView, type SessionRef } from '../sessions/sessions';
import { RAW_CHUNK_BYTES, writeRawChunk } from './raw-store';
import { recordPreset } from './mapping-presets';
import { assertSessionUnlocked, refuseIfLocked } from '../sessions/lock';
import { buildSessionModel } from '../../processing/session-model';
import { platesInUse } from '../equipment/plates';
import {
	angleFileFor,
	checkForceFile,
	copOffPlateProblems,
	headerCells,
	plateColumns,
	platesOfColumns,
	type BufferedForce
} from './force-files';
import { DEFAULT_CONTACT_THRESHOLD_N, type ForcePlate } from '../../processing/forces';
import {
	columnMappingSchema,
	forceChannelsOf,
	parseRecording,
	plateChannelNames,
	type ColumnMapping,
	type ExpectedChannel,
	type Problem
} from '../../processing/recording';
import type { UploadOutcome } from '../../types/sessions';

export type { UploadOutcome, UploadStatus } from '../../types/sessions';

/** Most files one request may carry; more are refused with a message. */
export const MAX_FILES_PER_REQUEST = 20;

const mb = (bytes: number) => `${Math.round((bytes / 1048576) * 10) / 10} MB`;

/** The limit as people read it ("100 MB"). */
export const uploadLimitText = () => mb(config().UPLOAD_LIMIT_BYTES);

/** Reads what is left of a body and throws it away (bounded), so the client can read our answer. */
async function drain(body: ReadableStream<Uint8Array> | null, maxBytes = 8 * 1048576): Promise<void> {
	if (!body) return;
	let n = 0;
	try {
		const reader = body.getReader();
		for (;;) {
			const { done, value } = await reader.read();
			if (done) return;
			n += value.byteLength;
			if (n > maxBytes) {
				await reader.cancel();
				return;
			}
		}
	} catch {
		/* the client has gone; nothing to answer */
	}
}

/** Form fields that came before the files: a mapping as JSON, a preset id, or the mapping table's own fields. */
type Fields = Map<string, string>;

function mappingFromTableFields(fields: Fields): unknown | null {
	if (!fields.has('timeColumn')) return null;
	const columns: Record<string, unknown> = {};
	for (let i = 0; i < 500; i++) {
		const header = fields.get(`col.${i}.header`);
		if (header === undefined) continue;
		const channel = fields.get(`col.${i}.channel`) ?? '';
		columns[header] = {
			channel: channel || null,
			unit: fields.get(`col.${i}.unit`) ?? 'deg',
			flip: fields.get(`col.${i}.flip`) === 'on' || fields.get(`col.${i}.flip`) === 'true'
		};
	}
	return { timeColumn: fields.get('timeColumn'), timeUnit: fields.get('timeUnit') || 's', columns };
}

/** The mapping the person chose for these files, or a problem naming the field that is wrong. */
async function resolveMapping(
	fields: Fields,
	studyId: string
): Promise<{ mapping?: ColumnMapping; presetId?: string; problem?: Omit<Problem, 'file'> }> {
	const presetId = fields.get('presetId')?.trim();
	let raw: unknown = null;
	if (presetId) {
		const preset = isUuid(presetId) ? await MappingPreset.findOne({ where: { id: presetId.toLowerCase(), studyId } }) : null;
		if (!preset)
			return {
				problem: {
					field: 'presetId',
					code: 'preset-unknown',
					message: 'The chosen mapping preset does not exist in this study; choose another or map the columns again.',
					severity: 'error'
				}
			};
		raw = preset.mapping;
	} else if (fields.get('mapping')?.trim()) {
		try {
			raw = JSON.parse(fields.get('mapping')!);
		} catch {
			return {
				problem: {
					field: 'mapping',
					code: 'mapping-not-json',
					message: 'The column mapping sent with the file is not valid JSON.',
					severity: 'error'
				}
			};
		}
	} else raw = mappingFromTableFields(fields);
	if (raw === null) return {};
	const r = columnMappingSchema.safeParse(raw);
	if (!r.success) {
		const i = r.error.issues[0];
		return {
			problem: {
				field: ['mapping', ...i.path].join('.'),
				code: 'mapping-invalid',
				message: `The column mapping is not usable: ${i.path.join('.') || 'mapping'}: ${i.message}`,
				severity: 'error'
			}
		};
	}
	return { mapping: r.data, presetId };
}

/**
 * Cuts the incoming file into RAW_CHUNK_BYTES pieces, hashing every byte and (while `store` is on) writing each
 * piece to the database before it is handed on. Iterates the file stream by hand: the parser may stop reading
 * early, and the rest must still be hashed (and drained for busboy) without destroying the stream.
 */
function chunker(file: Readable, write: (seq: number, bytes: Buffer) => Promise<void>, stop: () => boolean) {
	const it = file[Symbol.asyncIterator]() as AsyncIterator<Buffer>;
	const hash = createHash('sha256');
	const state = { size: 0, chunks: 0, store: true, done: false, writeError: null as Error | null, readError: null as Error | null };
	let pending: Buffer[] = [];
	let pendingLen = 0;
	const emit = async (bytes: Buffer) => {
		if (state.store) {
			try {
				await write(state.chunks, bytes);
			} catch (err) {
				// a storage fault is ours, not the file's: remember it so it is not reported as a bad file
				state.writeError = err as Error;
				state.store = false;
				throw err;
			}
		}
		state.chunks++;
		return bytes;
	};
	/** The next stored piece, or null at the end of the file. */
	async function next(): Promise<Buffer | null> {
		while (!state.done && pendingLen < RAW_CHUNK_BYTES) {
			let r: IteratorResult<Buffer>;
			try {
				r = await it.next();
			} catch (err) {
				// the body broke off (client gone, malformed multipart): not the file's content
				state.readError = err as Error;
				throw err;
			}
			if (r.done) {
				state.done = true;
				break;
			}
			const piece = r.value;
			hash.update(piece);
			state.size += piece.length;
			pending.push(piece);
			pendingLen += piece.length;
		}
		if (pendingLen === 0) return null;
		const all = pending.length === 1 ? pending[0] : Buffer.concat(pending, pendingLen);
		const out = pendingLen > RAW_CHUNK_BYTES ? all.subarray(0, RAW_CHUNK_BYTES) : all;
		const rest = pendingLen > RAW_CHUNK_BYTES ? all.subarray(RAW_CHUNK_BYTES) : null;
		pending = rest ? [rest] : [];
		pendingLen = rest ? rest.length : 0;
		return emit(out);
	}
	async function* pieces(): AsyncGenerator<Uint8Array> {
		// past the size limit the file is refused anyway: stop feeding the parser, the rest is only hashed and drained
		for (let b = await next(); b && !stop(); b = await next()) yield b;
	}
	return { state, pieces, next, sha256: () => hash.digest('hex') };
}

interface FileContext {
	requestContext: RequestContext;
	actor: Actor;
	studyId: string;
	session: Session;
	participantCode: string;
	expected: ExpectedChannel[];
	fields: Fields;
	limit: number;
	/** The force file of this angle file when one came before it or comes right after it, else null. */
	forceFor: (angleFile: string, next: Promise<NextPart>) => Promise<BufferedForce | null>;
	/** The lab's plates in use (read once per request, when a force file needs them). */
	plates: () => Promise<ForcePlate[]>;
}

/** What followed a file part in the body: a force file (and the angle file it names), another file, or the end. */
type NextPart = { angleFile: string; force: Promise<BufferedForce> } | null;

/** Reads a force file whole (bounded by the upload limit; beyond it the rest is drained and the file marked truncated). */
async function bufferForce(file: Readable, info: busboy.FileInfo, angleFile: string): Promise<BufferedForce> {
	const fileName = basename((info.filename ?? '').replace(/\\/g, '/')).slice(0, 255) || 'unnamed file';
	let truncated = false;
	file.on('limit', () => (truncated = true));
	const parts: Buffer[] = [];
	for await (const piece of file) if (!truncated) parts.push(piece as Buffer);
	return { fileName, bytes: Buffer.concat(parts), contentType: info.mimeType || null, truncated, angleFile };
}

/**
 * Receives one angle file of the multipart body (and the force file paired with it); resolves once the whole file
 * part has been read. The outcomes: the angle file's, then its force file's when it has one.
 */
async function receiveFile(ctx: FileContext, file: Readable, info: busboy.FileInfo, next: Promise<NextPart>): Promise<UploadOutcome[]> {
	const fileName = basename((info.filename ?? '').replace(/\\/g, '/')).slice(0, 255) || 'unnamed file';
	let truncated = false;
	file.on('limit', () => (truncated = true));
	const uploadId = randomUUID();
	const sequelize = db();
	const { mapping, presetId, problem: mappingProblem } = await resolveMapping(ctx.fields, ctx.studyId);
	const t: Transaction = await sequelize.transaction();
	const chunks = chunker(
		file,
		(seq, bytes) => writeRawChunk(uploadId, seq, bytes, t),
		() => truncated
	);
	let outcome: UploadOutcome;
	let force: BufferedForce | null = null;
	let forceOutcome: UploadOutcome | null = null;
	try {
		// inside the file's transaction too: an approval signed while the file was arriving wins
		await assertSessionUnlocked(ctx.session.id, t);
		await requireValidConsent(ctx.session.participantId, 'upload', t);
		let parsed: Awaited<ReturnType<typeof parseRecording>> | null = null;
		let parseCrash: Error | null = null;
		// force-plate columns in the angle file itself (same rate): the plates they name, checked like a force file's
		let inFile: ForcePlate[] = [];
		let inFileProblems: Problem[] | null = null;
		if (mappingProblem) chunks.state.store = false;
		else {
			try {
				// short gaps are bridged only when the person asks for it (field fillGaps); otherwise a blank cell is refused
				const fillGaps = ['on', 'true', '1'].includes(ctx.fields.get('fillGaps') ?? '');
				// the header is in the first piece: plate columns there (or in the mapping) add the plates' channels
				const pieces = chunks.pieces();
				const first = await pieces.next();
				const named = first.done ? [] : plateColumns(headerCells(Buffer.from(first.value)), mapping);
				if (named.length) {
					const of = platesOfColumns(fileName, named, await ctx.plates());
					if (of.ok) inFile = of.plates;
					else inFileProblems = of.problems;
				}
				if (inFileProblems) chunks.state.store = false;
				else {
					const replay = async function* () {
						if (!first.done) yield first.value;
						yield* pieces;
					};
					// validation only: the values are not kept here (the worker parses the stored bytes again), so memory stays
					// flat; a file with its own plate columns keeps them, to check each contact's CoP on its plate
					parsed = await parseRecording(replay(), {
						fileName,
						expected: inFile.length
							? [...ctx.expected, ...forceChannelsOf(inFile, { thresholdN: DEFAULT_CONTACT_THRESHOLD_N })]
							: ctx.expected,
						mapping,
						fillGaps,
						keepValues: inFile.length > 0
					});
					if (parsed.ok && inFile.length) {
						const cop = copOffPlateProblems(fileName, parsed.recording, inFile, {
							sampleHz: parsed.recording.sampleHz,
							thresholdN: DEFAULT_CONTACT_THRESHOLD_N
						});
						if (cop.length) inFileProblems = cop;
					}
				}
			} catch (err) {
				// a parser failure on odd input is still bad input to the person, never a server error
				if (chunks.state.writeError) throw chunks.state.writeError;
				if (chunks.state.readError) throw chunks.state.readError;
				parseCrash = err as Error;
				console.error(`[upload] the parser failed on ${fileName}:`, err);
			}
		}
		if (!parsed?.ok || inFileProblems || truncated) chunks.state.store = false;
		while (await chunks.next()) {
			if (truncated) chunks.state.store = false;
		}
		const sha256 = chunks.sha256();
		const byteSize = chunks.state.size;
		const base = { fileName, byteSize, sha256 };
		const dup = await Trial.findOne({ where: { sessionId: ctx.session.id, sha256 }, transaction: t });
		if (truncated || (file as Readable & { truncated?: boolean }).truncated) {
			outcome = {
				...base,
				status: 413,
				message: `${fileName}: the file is larger than the ${mb(ctx.limit)} limit; nothing was stored. Split the recording or ask the lab administrator to raise UPLOAD_LIMIT_BYTES.`
			};
		} else if (byteSize === 0) {
			outcome = {
				...base,
				status: 422,
				message: `${fileName} is empty (0 bytes); nothing was stored.`,
				problems: [
					{
						file: fileName,
						code: 'empty-file',
						message: `${fileName} is empty (0 bytes): choose the recording file again.`,
						severity: 'error'
					}
				]
			};
		} else if (dup) {
			outcome = {
				...base,
				status: 409,
				message: `${fileName} was already uploaded to this session as trial ${dup.fileName} on ${dup.createdAt.toISOString().slice(0, 10)}; it was not stored again.`,
				duplicateOf: { trialId: dup.id, fileName: dup.fileName, uploadedAt: dup.createdAt.toISOString() }
			};
		} else if (mappingProblem) {
			outcome = {
				...base,
				status: 422,
				message: `${fileName}: ${mappingProblem.message}`,
				problems: [{ file: fileName, ...mappingProblem }]
			};
		} else if (inFileProblems) {
			const n = inFileProblems.length;
			outcome = {
				...base,
				status: 422,
				message: `${fileName} was rejected: its force-plate columns cannot be used (${n} problem${n === 1 ? '' : 's'}); nothing was stored.`,
				problems: inFileProblems
			};
		} else if (!parsed) {
			outcome = {
				...base,
				status: 422,
				message: `${fileName} could not be read as a recording; nothing was stored.`,
				problems: [
					{
						file: fileName,
						code: 'unreadable',
						message: `${fileName} could not be read as a delimited text recording (${parseCrash?.message ?? 'unknown reason'}).`,
						severity: 'error'
					}
				]
			};
		} else if (!parsed.ok) {
			const n = parsed.problems.filter((p) => p.severity === 'error').length || parsed.problems.length;
			outcome = {
				...base,
				status: 422,
				message: parsed.needsMapping
					? `${fileName}: its columns are not in Momentry's layout; match each column to a model DOF and upload it again.`
					: `${fileName} was rejected (${n} problem${n === 1 ? '' : 's'}); nothing was stored.`,
				problems: parsed.problems,
				...(parsed.needsMapping ? { needsMapping: parsed.needsMapping } : {})
			};
		} else if ((force = await ctx.forceFor(fileName, next)) && force.truncated) {
			outcome = {
				...base,
				status: 413,
				message: `${fileName}: its force file ${force.fileName} is larger than the ${mb(ctx.limit)} limit; neither file was stored.`
			};
		} else {
			const rec = parsed.recording;
			const frames = rec.time.length;
			let forceStored: { uploadId: string; sha256: string; sampleHz: number; plates: string[]; mapping: ColumnMapping | null } | null =
				null;
			let forceProblems: Problem[] | null = null;
			if (force && inFile.length) {
				forceProblems = [
					{
						file: force.fileName,
						code: 'forces-twice',
						message: `${fileName} carries its own force-plate columns (${inFile.map((p) => p.name).join(', ')}), so the force file ${force.fileName} cannot be used with it: upload the angle file with its plate columns alone, or without them and with the force file.`,
						severity: 'error'
					}
				];
			} else if (force) {
				const fm = await resolveMapping(
					new Map([
						['mapping', ctx.fields.get('forceMapping') ?? ''],
						['presetId', ctx.fields.get('forcePresetId') ?? '']
					]),
					ctx.studyId
				);
				if (fm.problem)
					forceProblems = [
						{
							file: force.fileName,
							...fm.problem,
							field: fm.problem.field?.replace(/^mapping|^presetId/, (f) => (f === 'mapping' ? 'forceMapping' : 'forcePresetId'))
						}
					];
				else {
					const checked = await checkForceFile(force, { fileName, recording: rec }, await ctx.plates(), { mapping: fm.mapping });
					if (!checked.ok) forceProblems = checked.problems;
					else {
						const forceId = randomUUID();
						const forceSha = createHash('sha256').update(force.bytes).digest('hex');
						await RawUpload.create(
							{
								id: forceId,
								sha256: forceSha,
								byteSize: force.bytes.length,
								fileName: force.fileName,
								contentType: force.contentType,
								uploadedBy: ctx.actor.id
							},
							{ transaction: t }
						);
						for (let seq = 0, at = 0; at < force.bytes.length; seq++, at += RAW_CHUNK_BYTES)
							await writeRawChunk(forceId, seq, force.bytes.subarray(at, at + RAW_CHUNK_BYTES), t);
						forceStored = {
							uploadId: forceId,
							sha256: forceSha,
							sampleHz: checked.recording.sampleHz,
							plates: checked.plates.map((p) => p.name),
							mapping: fm.mapping ?? null
						};
					}
				}
			}
			// forces in the angle file: the trial's force recording is the angle file's own bytes (same upload, rate ratio 1)
			if (!force && inFile.length)
				forceStored = {
					uploadId,
					sha256,
					sampleHz: rec.sampleHz,
					plates: inFile.map((p) => p.name),
					mapping: mapping ?? null
				};
			const plateChannels = new Set(inFile.flatMap((p) => plateChannelNames(p)));
			if (force && forceProblems) {
				const n = forceProblems.filter((p) => p.severity === 'error').length || forceProblems.length;
				outcome = {
					...base,
					status: 422,
					message: `${fileName} was not stored: its force file ${force.fileName} was rejected (${n} problem${n === 1 ? '' : 's'}); nothing was stored.`,
					problems: forceProblems,
					pairedWith: { role: 'force', fileName: force.fileName }
				};
			} else {
				await RawUpload.create(
					{ id: uploadId, sha256, byteSize, fileName, contentType: info.mimeType || null, uploadedBy: ctx.actor.id },
					{ transaction: t }
				);
				const trial = await Trial.create(
					{
						sessionId: ctx.session.id,
						rawUploadId: uploadId,
						fileName,
						sha256,
						mapping: mapping ?? null,
						sampleHz: rec.sampleHz,
						frameCount: frames,
						durationS: frames > 1 ? rec.time[frames - 1] - rec.time[0] : 0,
						channels: rec.channels.map((c) => c.name).filter((c) => !plateChannels.has(c)),
						warnings: rec.warnings,
						createdBy: ctx.actor.id,
						...(forceStored
							? {
									forceRawUploadId: forceStored.uploadId,
									forceFileName: force?.fileName ?? fileName,
									forceSha256: forceStored.sha256,
									forceSampleHz: forceStored.sampleHz,
									forcePlates: forceStored.plates,
									forceMapping: forceStored.mapping
								}
							: {})
					},
					{ transaction: t }
				);
				let presetSaved: UploadOutcome['presetSaved'];
				const presetName = ctx.fields.get('presetName')?.trim().slice(0, 100);
				let presetNote = '';
				if (mapping && !presetId && presetName) {
					if (!may(ctx.actor, 'mapping.preset', ctx.studyId))
						presetNote = ' The mapping was not saved as a preset: your role may not save presets.';
					else if (await MappingPreset.findOne({ where: { studyId: ctx.studyId, name: presetName }, transaction: t }))
						presetNote = ` The mapping was not saved as a preset: the study already has a preset named “${presetName}”.`;
					else {
						const p = await MappingPreset.create(
							{ studyId: ctx.studyId, name: presetName, mapping, createdBy: ctx.actor.id },
							{ transaction: t }
						);
						presetSaved = { id: p.id, name: p.name };
						await recordPreset(ctx.actor, ctx.requestContext, ctx.studyId, p, t);
					}
				}
				await record(
					{
						action: 'trial.uploaded',
						actorUserId: ctx.actor.id,
						actorLabel: ctx.actor.email,
						studyId: ctx.studyId,
						recordType: 'trial',
						recordId: trial.id,
						ipAddress: ctx.requestContext.ipAddress,
						details: {
							sessionId: ctx.session.id,
							participant: ctx.participantCode,
							fileName,
							byteSize,
							sha256,
							frames,
							sampleHz: rec.sampleHz,
							mapped: !!mapping,
							presetId: presetId ?? null,
							warnings: rec.warnings.length,
							...(forceStored
								? {
										forceFile: {
											fileName: force?.fileName ?? fileName,
											sha256: forceStored.sha256,
											sampleHz: forceStored.sampleHz,
											plates: forceStored.plates,
											...(force ? {} : { sameFile: true })
										}
									}
								: {})
						}
					},
					t
				);
				outcome = {
					...base,
					status: 201,
					message: `${fileName} stored as a trial: ${frames} samples at ${Math.round(rec.sampleHz * 100) / 100} Hz${inFile.length && !force ? `, with the force plates ${inFile.map((p) => p.name).join(', ')} in the same file` : ''}${rec.warnings.length ? `, ${rec.warnings.length} warning${rec.warnings.length === 1 ? '' : 's'}` : ''}.${presetNote}`,
					trial: trialView(trial),
					...(presetSaved ? { presetSaved } : {}),
					...(force ? { pairedWith: { role: 'force' as const, fileName: force.fileName } } : {})
				};
			}
		}
		if (force) {
			forceOutcome = {
				fileName: force.fileName,
				status: outcome.status,
				message:
					outcome.status === 201
						? `${force.fileName} stored with ${fileName} as its force recording (plates ${(outcome.trial?.force?.plates ?? []).join(', ')}, ${Math.round((outcome.trial?.force?.sampleHz ?? 0) * 100) / 100} Hz).`
						: `${force.fileName} was not stored: ${outcome.message}`,
				byteSize: force.bytes.length,
				pairedWith: { role: 'angle', fileName },
				...(outcome.status !== 201 && outcome.problems ? { problems: outcome.problems } : {})
			};
		}
		if (outcome.status === 201) await t.commit();
		else await t.rollback();
	} catch (err) {
		await t.rollback().catch(() => {});
		chunks.state.store = false;
		try {
			while (await chunks.next());
		} catch {
			file.resume();
		}
		if (err instanceof UniqueConstraintError) {
			// the same file arrived twice at once: the other request stored it
			outcome = {
				fileName,
				status: 409,
				message: `${fileName} was uploaded to this session at the same moment by another request; it was not stored twice.`
			};
		} else if (isDomainError(err) && err.kind === 'conflict') {
			outcome = { fileName, status: 409, message: err.message };
		} else throw err;
		if (force)
			forceOutcome = { fileName: force.fileName, status: outcome.status, message: `${force.fileName} was not stored: ${outcome.message}` };
	}
	if (outcome.status !== 201) await auditRefusal(ctx, outcome, force?.fileName ?? null);
	return forceOutcome ? [outcome, forceOutcome] : [outcome];
}

/** A refused file: its refusal is recorded outside the rolled-back transaction (the one thing kept). */
async function auditRefusal(
	ctx: Pick<FileContext, 'actor' | 'studyId' | 'session' | 'requestContext' | 'participantCode'>,
	outcome: UploadOutcome,
	forceFile: string | null = null
) {
	const fileName = outcome.fileName;
	{
		await record({
			action: 'trial.rejected',
			actorUserId: ctx.actor.id,
			actorLabel: ctx.actor.email,
			outcome: 'failed',
			studyId: ctx.studyId,
			recordType: 'session',
			recordId: ctx.session.id,
			ipAddress: ctx.requestContext.ipAddress,
			details: {
				participant: ctx.participantCode,
				fileName,
				byteSize: outcome.byteSize ?? null,
				sha256: outcome.sha256 ?? null,
				status: outcome.status,
				problems: [...new Set((outcome.problems ?? []).filter((p) => p.severity === 'error').map((p) => p.code))],
				...(outcome.duplicateOf ? { duplicateOf: outcome.duplicateOf.trialId } : {}),
				...(forceFile ? { forceFile } : {})
			}
		});
	}
}

const invalid = (message: string) => new DomainError('invalid', message);

/** The request of an upload: which session, and the multipart body as it streams in with its content type. */
export interface UploadRequest extends SessionRef {
	body: ReadableStream<Uint8Array> | null;
	contentType: string;
}

/**
 * Handles POST …/sessions/[sid]/trials. Request-level refusals (access, unknown session, locked session, no
 * consent, not multipart, malformed multipart, no file) are thrown as domain errors; each file gets its own outcome.
 * Fields (`mapping`, `presetId`, `presetName`, `fillGaps`, or the mapping table's fields) must come before the files.
 */
export async function receiveTrials(
	actor: Actor | null,
	reqCtx: RequestContext,
	input: UploadRequest
): Promise<{ studyId: string; sessionId: string; outcomes: UploadOutcome[] }> {
	const { body, contentType } = input;
	const { actor: a, study } = await studyFor(actor, reqCtx, 'trial.upload', input.studyId);
	try {
		const session = await sessionIn(study.id, input.sessionId);
		refuseIfLocked(session.state);
		if (!EDITABLE_STATES.includes(session.state))
			throw conflict(`This session is ${session.state.replace('_', ' ')}; trials can be added only while it is a draft or returned.`);
		if (!/^multipart\/form-data\b/i.test(contentType))
			throw new DomainError('unsupported', 'Send the recording as multipart/form-data: a form with a file field named "file".');
		await requireValidConsent(session.participantId, 'upload');
		let expected: ExpectedChannel[];
		try {
			expected = buildSessionModel(await participantBodyOf(session.participantId), session.setup).expected;
		} catch (err) {
			throw conflict(`The session's model cannot be built, so files cannot be checked against it: ${(err as Error).message}`);
		}
		if (!body) throw invalid('The upload was empty: choose at least one recording file.');
		const participantCode = (await Participant.findByPk(session.participantId))?.code ?? '';
		const limit = config().UPLOAD_LIMIT_BYTES;
		let bb: busboy.Busboy;
		try {
			bb = busboy({
				headers: { 'content-type': contentType },
				limits: { fileSize: limit, files: MAX_FILES_PER_REQUEST, fields: 1000, fieldSize: 1048576, parts: 2000 },
				highWaterMark: 256 * 1024
			});
		} catch (err) {
			throw invalid(`The upload is not a well-formed multipart form (${(err as Error).message}).`);
		}
		const fields: Fields = new Map();
		// force files: those that came before their angle file wait here (by angle file name) until it comes
		const waiting = new Map<string, BufferedForce>();
		const claimed = new Set<BufferedForce>();
		const angleStatus = new Map<string, number>();
		let plates: Promise<ForcePlate[]> | null = null;
		const ctx: FileContext = {
			requestContext: reqCtx,
			actor: a,
			studyId: study.id,
			session,
			participantCode,
			expected,
			fields,
			limit,
			plates: () =>
				(plates ??= platesInUse().then((views) =>
					views.map((v) => ({ name: v.name, corners: v.corners, axes: v.axes, originDepthM: v.originDepthM, output: v.output }))
				)),
			forceFor: async (angleFile, next) => {
				const early = waiting.get(angleFile);
				if (early) {
					waiting.delete(angleFile);
					claimed.add(early);
					return early;
				}
				const part = await next;
				if (!part || part.angleFile !== angleFile) return null;
				const f = await part.force;
				claimed.add(f);
				return f;
			}
		};
		const outcomes: UploadOutcome[] = [];
		let resolveNext: (p: NextPart) => void = () => {};
		let tooMany = false;
		let chain: Promise<void> = Promise.resolve();
		let chainError: unknown = null;
		const finished = new Promise<void>((resolve, reject) => {
			bb.on('field', (name, value) => fields.set(name, value));
			bb.on('file', (_name, file, info) => {
				// a broken body destroys the file stream with an error, possibly before its turn in the chain has come;
				// the reader sees that error when it starts, and without a listener here it would end the process
				file.on('error', () => {});
				const previous = resolveNext;
				const next = new Promise<NextPart>((r) => (resolveNext = r));
				const fileName = basename((info.filename ?? '').replace(/\\/g, '/')).slice(0, 255) || 'unnamed file';
				const angleFile = angleFileFor(fileName, fields);
				if (angleFile) {
					// a force file: read whole now (the angle file before it may be waiting for it), its outcome given with its angle file
					const force = bufferForce(file, info, angleFile);
					force.catch(() => {});
					previous({ angleFile, force });
					chain = chain.then(async () => {
						if (chainError) return;
						try {
							const f = await force;
							if (claimed.has(f)) return;
							const status = angleStatus.get(angleFile);
							if (status === undefined) return void waiting.set(angleFile, f);
							const outcome: UploadOutcome = {
								fileName: f.fileName,
								status: 422,
								byteSize: f.bytes.length,
								pairedWith: { role: 'angle', fileName: angleFile },
								message:
									status === 201
										? `${f.fileName} was not stored: a force file must come right after its angle file ${angleFile} in the form (or before it); upload the two again together.`
										: `${f.fileName} was not stored: its angle file ${angleFile} was refused.`
							};
							await auditRefusal(ctx, outcome, f.fileName);
							outcomes.push(outcome);
						} catch (err) {
							chainError = err;
						}
					});
					return;
				}
				previous(null);
				chain = chain.then(async () => {
					if (chainError) return void file.resume();
					try {
						const got = await receiveFile(ctx, file, info, next);
						angleStatus.set(got[0].fileName, got[0].status);
						outcomes.push(...got);
					} catch (err) {
						chainError = err;
						file.resume();
					}
				});
			});
			bb.on('filesLimit', () => (tooMany = true));
			bb.on('error', (err) => reject(err));
			bb.on('close', () => {
				resolveNext(null);
				resolve();
			});
		});
		const source = Readable.fromWeb(body as import('node:stream/web').ReadableStream<Uint8Array>);
		source.on('error', (err) => bb.destroy(err));
		source.pipe(bb);
		try {
			await finished;
		} catch (err) {
			source.unpipe(bb);
			source.resume();
			await chain;
			throw invalid(
				`The upload is not a well-formed multipart form (${(err as Error).message}); nothing more was read.${outcomes.length ? ` ${outcomes.length} file(s) before the fault were handled.` : ''}`
			);
		}
		resolveNext(null);
		await chain;
		if (chainError) throw chainError;
		for (const [angleFile, f] of waiting) {
			const outcome: UploadOutcome = {
				fileName: f.fileName,
				status: 422,
				byteSize: f.bytes.length,
				message: `${f.fileName} was not stored: it is a force file for ${angleFile}, but no angle file of that name came with it. Upload the two together (name the force file "<angle file name>.forces.csv", or choose its angle file).`,
				problems: [
					{
						file: f.fileName,
						code: 'force-without-angle',
						field: `forcesFor.${f.fileName}`,
						message: `No angle file named ${angleFile} came with the force file ${f.fileName}.`,
						severity: 'error'
					}
				]
			};
			await auditRefusal(ctx, outcome, f.fileName);
			outcomes.push(outcome);
		}
		if (outcomes.length === 0) throw invalid('No file was sent: choose at least one recording file (form field "file").');
		if (tooMany)
			outcomes.push({
				fileName: '(further files)',
				status: 400,
				message: `Only ${MAX_FILES_PER_REQUEST} files can be sent at once; the rest were not read. Send them again.`
			});
		return { studyId: study.id, sessionId: session.id, outcomes };
	} catch (err) {
		await drain(body);
		throw err;
	}
}
