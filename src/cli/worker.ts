// `npm run worker`: the background job worker (pg-boss), started by the launcher next to the app.
import { startWorker } from '../lib/server/jobs/worker';
import { stopQueue } from '../lib/server/jobs/queue';
import { closeDb } from '../lib/server/db/index';
import { closeMail } from '../lib/server/mail/index';

const log = (m: string) => console.log(m);
let closing = false;

async function close() {
	if (closing) return;
	closing = true;
	await stopQueue();
	await closeDb();
	closeMail();
	process.exit(0);
}
process.on('SIGTERM', () => void close());
process.on('SIGINT', () => void close());

startWorker(log).catch((err: Error) => {
	console.error(`worker could not start: ${err.message}`);
	process.exit(1);
});
