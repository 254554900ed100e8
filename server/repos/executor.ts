import type { Db } from '../../db/client';

/** A repository call runs on the database or inside a transaction the service opened. */
export type Tx = Parameters<Parameters<Db['transaction']>[0]>[0];
export type Executor = Db | Tx;
