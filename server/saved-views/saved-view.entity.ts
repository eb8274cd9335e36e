import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm';
import type { SavedViewFilters } from '../../shared/saved-views';

/** One person's named queue filters and order (issue 14, shared/saved-views.ts). */
@Entity({ name: 'saved_view' })
export class SavedViewRecord {
  @PrimaryGeneratedColumn('uuid')
  id: string;

  @Column({ name: 'user_id', type: 'uuid' })
  userId: string;

  @Column({ type: 'text' })
  name: string;

  @Column({ type: 'jsonb', default: () => `'{}'` })
  filters: SavedViewFilters;

  @CreateDateColumn({ name: 'created_at', type: 'timestamptz' })
  createdAt: Date;
}
