// Force plates: the plate as lab equipment, loads on the person from what a plate measures, forces at the angle
// rate, and contacts. Pure TypeScript, no I/O. docs/processing.md ("Force plates") has the formulas and sign rules.
export * from './plate';
export * from './cop';
export * from './resample';
export * from './contacts';
