// Every table of the Halfmark database. drizzle-kit reads this file; add new table files here.
export * from './core';
export * from './auth';
export * from './sync';
export * from './calibrations';
export * from './desk';
