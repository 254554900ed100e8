import { standardizeTitrant, type StandardizeInput } from '../../../shared/engine/index';

/** `standardize FILE.json`: primary-standard mass and titre → titrant concentration with its GUM budget. */
export const standardize = (input: unknown) => standardizeTitrant(input as StandardizeInput);
