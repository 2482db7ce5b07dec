// Every migration, in order. A new one is a file NNNN-what.ts exporting up/down and a line here.
import type { QueryInterface } from 'sequelize';
import * as m0001 from './0001-accounts-and-audit';
import * as m0003 from './0003-registry';
import * as m0004 from './0004-verification-runs';

export interface Migration {
  name: string;
  up: (q: QueryInterface) => Promise<void>;
  down: (q: QueryInterface) => Promise<void>;
}

export const migrations: Migration[] = [
  { name: '0001-accounts-and-audit', ...m0001 },
  { name: '0003-registry', ...m0003 },
  { name: '0004-verification-runs', ...m0004 }
];
