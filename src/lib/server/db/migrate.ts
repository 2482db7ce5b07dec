// Schema changes only through these migrations (Umzug); never sync() outside throwaway tests.
import { Umzug, SequelizeStorage } from 'umzug';
import type { QueryInterface, Sequelize } from 'sequelize';
import { migrations } from './migrations';

export function migrator(sequelize: Sequelize): Umzug<QueryInterface> {
  return new Umzug({
    migrations: migrations.map((m) => ({
      name: m.name,
      up: ({ context }) => m.up(context),
      down: ({ context }) => m.down(context)
    })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined
  });
}

export async function migrateUp(sequelize: Sequelize): Promise<string[]> {
  const done = await migrator(sequelize).up();
  return done.map((m) => m.name);
}

export async function migrateDown(sequelize: Sequelize, step = 1): Promise<string[]> {
  const done = await migrator(sequelize).down({ step });
  return done.map((m) => m.name);
}
