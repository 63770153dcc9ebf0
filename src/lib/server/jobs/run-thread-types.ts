// Messages between the worker and a run's computation thread.
import type { ComputedRun, ForceInput } from '../runs/compute';
import type { SessionSetup } from '../../processing/session-model';
import type { RunOptions } from '../../processing/pipeline';
import type { Recording } from '../../processing/recording';
import type { ParticipantBody } from '../../anthropometry/scale';

export interface RunThreadInput {
	body: ParticipantBody;
	setup: SessionSetup;
	recording: Recording;
	options: RunOptions;
	/** The trial's force recording, paired with the angle recording; absent for a trial without one. */
	force?: ForceInput | null;
}

export type RunThreadMessage =
	| { type: 'progress'; fraction: number; stage: string }
	| { type: 'done'; computed: ComputedRun }
	| { type: 'error'; name: string; message: string; problems?: string[] };
