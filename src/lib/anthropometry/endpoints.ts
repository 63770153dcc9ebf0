// Segment endpoints: the landmarks a table row measures its fractions between, and the joint centres the limb
// trees (scale.ts) hang each segment from. A table row is used only if its endpoints are the model's (tables.ts checks).

import type { SegmentName } from './tables';

/** Every landmark a table in /anthropometry may name as a segment endpoint, with what it is. */
export const LANDMARKS = {
	'shoulder joint centre': 'centre of rotation of the glenohumeral joint',
	'elbow joint centre': 'centre of the elbow on its flexion axis',
	'wrist joint centre': 'centre of the wrist on its flexion axis',
	'hip joint centre': 'centre of the femoral head',
	'knee joint centre': 'centre of the knee on its flexion axis, between the femoral condyles',
	'ankle joint centre': 'centre of the ankle (talocrural joint) on its dorsiflexion axis',
	'ulnar styloid': 'tip of the styloid process of the ulna',
	'head of metacarpal III': 'distal palpable point of the third metacarpal, on the back of the hand (the knuckle of the middle finger)',
	'knuckle II of the middle finger': 'a knuckle of the middle finger, in Winter’s (2009) wording (not the fingertip)',
	'tip of the middle finger': 'the fingertip of the middle finger (dactylion III)',
	'greater trochanter': 'top of the greater trochanter of the femur, lateral to the hip joint',
	'femoral condyles': 'the condyles of the femur at the knee',
	'lateral malleolus': 'lateral bony projection of the malleolus (fibula)',
	'medial malleolus': 'medial bony projection of the malleolus (tibia)',
	heel: 'most posterior point of the heel (pternion)',
	'head of metatarsal II': 'head of the second metatarsal, at the ball of the foot',
	'tip of the longest toe': 'tip of the longest toe (acropodion)'
} as const;
export type Landmark = keyof typeof LANDMARKS;
export const LANDMARK_NAMES = Object.keys(LANDMARKS) as [Landmark, ...Landmark[]];

/** A terminal segment (hand, foot) has no distal joint: its distal endpoint is wherever the length it is scaled by ends. */
export const LENGTH_END = 'the end of its length' as const;

/**
 * The endpoints each segment of the limb trees needs. Upper arm, forearm, thigh and shank run from joint centre to
 * joint centre: their length places the next joint, so a table's fractions must be measured between the same two
 * joint centres. Hand and foot hang from the wrist and ankle joint centres and carry no further joint; their fractions
 * must be measured between the joint centre and the landmark their length runs to (the table's own mean length, the
 * stature-proportion length, or a measured length taken between the endpoints the model page shows).
 */
export const MODEL_ENDPOINTS = {
	upperarm: { proximal: 'shoulder joint centre', distal: 'elbow joint centre' },
	forearm: { proximal: 'elbow joint centre', distal: 'wrist joint centre' },
	hand: { proximal: 'wrist joint centre', distal: LENGTH_END },
	thigh: { proximal: 'hip joint centre', distal: 'knee joint centre' },
	shank: { proximal: 'knee joint centre', distal: 'ankle joint centre' },
	foot: { proximal: 'ankle joint centre', distal: LENGTH_END }
} as const satisfies Record<SegmentName, { proximal: Landmark; distal: Landmark | typeof LENGTH_END }>;
