// The fields of a participant, as the form that adds one and the forms that correct one ask for them.
import type { Choice } from './fields';

export interface FieldSpec {
	name: string;
	label: string;
	hint?: string;
	type?: 'email' | 'tel';
	inputmode?: 'decimal' | 'numeric';
	options?: readonly Choice[];
	rows?: number;
}

/** Research data: seen by the whole study team. */
export const RESEARCH_FIELDS: readonly FieldSpec[] = [
	{ name: 'sex', label: 'Sex', hint: '(selects the segment parameters)', options: [['', 'choose…'], 'female', 'male', 'not reported'] },
	{ name: 'bodyMassKg', label: 'Body mass', hint: '(kg, 20–300)', inputmode: 'decimal' },
	{ name: 'statureM', label: 'Stature', hint: '(m, 0.8–2.5)', inputmode: 'decimal' },
	{ name: 'birthYear', label: 'Birth year', hint: '(optional)', inputmode: 'numeric' },
	{ name: 'dominantSide', label: 'Dominant side', hint: '(optional)', options: [['', 'not recorded'], 'left', 'right'] },
	{ name: 'notes', label: 'Notes', hint: '(optional; no names or contact details here)', rows: 3 }
];

/** Personal data: stored apart, seen only by the principal investigator and technicians. */
export const PERSONAL_FIELDS: readonly FieldSpec[] = [
	{ name: 'fullName', label: 'Full name', hint: '(optional)' },
	{ name: 'email', label: 'E-mail address', hint: '(optional; needed later for e-mailed consent)', type: 'email' },
	{ name: 'phone', label: 'Phone', hint: '(optional)', type: 'tel' }
];
