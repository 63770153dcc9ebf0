// Server configuration read once from the environment and validated, shared by app, worker and CLI.
import { z } from 'zod';

const schema = z.object({
	DATABASE_URL: z
		.string({ error: 'DATABASE_URL is not set: start Momentry with `npm start`, or set it to a postgres:// URL' })
		.regex(/^postgres(ql)?:\/\//, 'DATABASE_URL must start with postgres:// or postgresql://'),
	SMTP_URL: z
		.string()
		.regex(/^smtps?:\/\//, 'SMTP_URL must start with smtp:// or smtps://')
		.default('smtp://127.0.0.1:4825'),
	MAIL_FROM: z.string().default('Momentry <no-reply@momentry.localhost>'),
	ORIGIN: z.string().url().optional(),
	/** Largest recording file the trial upload accepts, bytes (default 100 MB). */
	UPLOAD_LIMIT_BYTES: z.coerce.number().int().min(1).default(104_857_600),
	/** A run's job counts as abandoned (worker gone) after this long active; longer than any run should take. */
	RUN_EXPIRE_SECONDS: z.coerce.number().int().min(5).max(86_400).default(900),
	/** How often the queue looks for abandoned jobs (pg-boss maintenance), seconds. */
	QUEUE_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).max(3_600).default(30)
});

export type ServerConfig = z.infer<typeof schema>;

let cached: ServerConfig | null = null;

/** Returns the validated configuration; throws a message naming the bad variable. */
export function config(): ServerConfig {
	if (cached) return cached;
	const parsed = schema.safeParse(process.env);
	if (!parsed.success) {
		const lines = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`);
		throw new Error(`Invalid configuration\n  ${lines.join('\n  ')}`);
	}
	cached = parsed.data;
	return cached;
}

/** Forgets the cached configuration (tests that change the environment). */
export function resetConfig(): void {
	cached = null;
}
