// The one Sequelize connection of a process. UTC everywhere, utf8mb4, pool sized by DB_POOL_MAX.
import { Sequelize, type Transaction } from 'sequelize';
import { config } from '../config';

let instance: Sequelize | null = null;

export function sequelizeFor(url: string, poolMax = 10): Sequelize {
  return new Sequelize(url, {
    dialect: 'mariadb',
    logging: false,
    timezone: '+00:00',
    pool: { max: poolMax, min: 0, idle: 10_000, acquire: 30_000 },
    dialectOptions: { timezone: '+00:00', charset: 'utf8mb4', connectTimeout: 10_000 },
    define: { charset: 'utf8mb4', collate: 'utf8mb4_unicode_ci', underscored: true, timestamps: false }
  });
}

export function getSequelize(): Sequelize {
  if (!instance) {
    const c = config();
    instance = sequelizeFor(c.databaseUrl, c.databasePoolMax);
  }
  return instance;
}

/** Runs fn in one transaction: every mutation and its audit event commit or roll back together. */
export function inTransaction<T>(fn: (t: Transaction) => Promise<T>): Promise<T> {
  return getSequelize().transaction(fn);
}

export async function closeDatabase(): Promise<void> {
  if (instance) {
    const s = instance;
    instance = null;
    await s.close();
  }
}
