/** Every TypeORM entity. Add new ones here. */
import { AccessLog } from '../access-log/access-log.entity';
import { User } from '../users/user.entity';

export const entities = [User, AccessLog];
