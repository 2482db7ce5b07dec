// Migrations and (in demo mode) the demo seed, run against DATABASE_URL before the server starts.
import { getSequelize, closeDatabase } from '../../../src/lib/server/db';
import { migrateUp } from '../../../src/lib/server/db/migrate';
import { seedDemo, type SeedResult } from '../../../src/lib/server/demo/seed';

export async function prepareDatabase(opts: {
  demo: boolean;
  /** also publish the example catalogue (verified, reviewed, released) through the registry services */
  catalogue?: boolean;
  log?: (s: string) => void;
}): Promise<SeedResult> {
  const log = opts.log ?? (() => undefined);
  try {
    const applied = await migrateUp(getSequelize());
    if (applied.length) log(`[isoledger] applied migrations: ${applied.join(', ')}`);
    if (!opts.demo) return { created: false, accounts: [] };
    return await seedDemo(log, { catalogue: opts.catalogue ?? false });
  } finally {
    await closeDatabase();
  }
}
