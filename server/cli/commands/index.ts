// The command line's commands: one line per command. A handler takes the parsed JSON file and returns the one
// object to print; it throws on bad input (an error with `issues: string[]` is shown issue by issue).
import { analyze } from './analyze';
import { dripRate } from './drip-rate';
import { electrode } from './electrode';
import { simulate } from './simulate';
import { standardize } from './standardize';

export type CommandHandler = (input: unknown) => unknown;

export const commands: Record<string, CommandHandler> = {
  analyze,
  'drip-rate': dripRate,
  electrode,
  simulate,
  standardize,
};
