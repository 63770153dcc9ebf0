// Entry of a run's worker thread: Node 20 does not hand the parent's tsx loader to threads, so register it here.
import { register } from 'tsx/esm/api';

register();
await import('./run-thread.ts');
