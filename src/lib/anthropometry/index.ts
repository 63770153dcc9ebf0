// Anthropometry: the published tables and participant-scaled limb models for the engine.
export * from './endpoints';
export * from './tables';
export * from './scale';
