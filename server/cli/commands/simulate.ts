import { simulateCurve, type SimulateParams } from '../../../shared/engine/index';

/** `simulate FILE.json`: assumed constants and amounts → the predicted curve and equivalence points. */
export const simulate = (input: unknown) => simulateCurve(input as SimulateParams);
