// The multibody engine's public API: model, kinematics, inverse and forward dynamics, integration.
export * from './model';
export * from './workspace';
export {
	inverseDynamics,
	inverseDynamicsBatch,
	type DynamicsOptions,
	type InverseDynamicsResult,
	type BatchOutput,
	type BatchOptions
} from './rnea';
export { forwardKinematics, type Pose } from './kinematics';
export { massMatrix, massMatrixInto, bias, biasInto } from './mass-matrix';
export { forwardDynamics, forwardDynamicsInto, energy } from './forward';
export { choleskyInPlace, choleskySolveInPlace, NotPositiveDefiniteError } from './cholesky';
export { simulate, type SimulationOptions, type Simulation, type TorqueLaw } from './integrate';
