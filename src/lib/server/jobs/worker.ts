// Background worker: registers a handler per queue; each handler is safe to run again on retry.
import type PgBoss from 'pg-boss';
import { queue, QUEUES } from './queue';
import { sendMail, mailMessage } from '../mail/index';

export async function startWorker(log: (msg: string) => void = console.log): Promise<PgBoss> {
	const boss = await queue();
	await boss.work(QUEUES.mailSend, { batchSize: 5 }, async (jobs) => {
		for (const job of jobs) {
			const message = mailMessage.parse(job.data);
			const id = await sendMail(message);
			log(`mail sent to ${message.to} (${id})`);
		}
	});
	log(`worker listening on queues: ${Object.values(QUEUES).join(', ')}`);
	return boss;
}
