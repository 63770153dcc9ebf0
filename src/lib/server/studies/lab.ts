// Reads the lab this installation serves (shown in the shell and on the home page).
import { Lab } from '../db/models';

export interface LabSummary {
	name: string;
	institution: string;
}

export async function currentLab(): Promise<LabSummary | null> {
	const lab = await Lab.findOne({ order: [['id', 'ASC']] });
	return lab ? { name: lab.name, institution: lab.institution } : null;
}
