/**
 * Every migration, in order. Listed by hand (not globbed) so tsx, jest and the built
 * server all load the same classes. Add new ones at the end.
 */
import { Foundation1764600000000 } from './1764600000000-foundation';
import { Auth1764650000000 } from './1764650000000-auth';

export const migrations = [Foundation1764600000000, Auth1764650000000];
