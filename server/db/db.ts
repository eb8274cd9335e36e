/**
 * What a repository function runs its SQL on: the data source, or a transaction's manager
 * when the caller needs the statement inside its transaction.
 */
import type { DataSource, EntityManager } from 'typeorm';

/** The data source or a transaction's entity manager. */
export type Db = DataSource | EntityManager;
