// The ordered list of migrations; listed statically so the bundled app and the CLI see the same set.
import type { Migration } from './types';
import * as m0001 from './0001-lab-foundation';
import * as m0002 from './0002-people-and-access';
import * as m0003 from './0003-study-records-and-participants';
import * as m0004 from './0004-consent';
import * as m0005 from './0005-sessions-trials-runs';
import * as m0006 from './0006-session-review';
import * as m0007 from './0007-cycle-events';
import * as m0008 from './0008-run-edge-zones';
import * as m0009 from './0009-run-job-id';
import * as m0010 from './0010-force-plates';
import * as m0011 from './0011-trial-forces-and-gait';

export const migrations: { name: string; up: Migration; down: Migration }[] = [
	{ name: '0001-lab-foundation', ...m0001 },
	{ name: '0002-people-and-access', ...m0002 },
	{ name: '0003-study-records-and-participants', ...m0003 },
	{ name: '0004-consent', ...m0004 },
	{ name: '0005-sessions-trials-runs', ...m0005 },
	{ name: '0006-session-review', ...m0006 },
	{ name: '0007-cycle-events', ...m0007 },
	{ name: '0008-run-edge-zones', ...m0008 },
	{ name: '0009-run-job-id', ...m0009 },
	{ name: '0010-force-plates', ...m0010 },
	{ name: '0011-trial-forces-and-gait', ...m0011 }
];
