/** Every TypeORM entity. Add new ones here. */
import { User } from '../users/user.entity';

export const entities = [User];
