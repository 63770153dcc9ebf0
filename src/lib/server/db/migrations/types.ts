// Shape of one migration step as umzug calls it, with Sequelize's QueryInterface as context.
import type { QueryInterface } from 'sequelize';
import type { MigrationFn } from 'umzug';

export type Migration = MigrationFn<QueryInterface>;
