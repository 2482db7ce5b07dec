// Seeds the demo through the same services the application uses (no back door). Only ever called
// by the demo start (`npm start`) and the test harness, never in production mode.
import { countUsers, createUser } from '../auth/users';
import { DEMO_PEOPLE, demoPassword } from './firm';

export interface SeedResult {
  created: boolean;
  accounts: { email: string; roles: string[] }[];
}

export interface SeedOptions {
  /** also publish the example catalogue through the registry services (the demo start asks for it; tests do not) */
  catalogue?: boolean;
}

/** Loaded only when asked for: it brings the verification engine and its sandbox. */
async function publishCatalogue(log: (s: string) => void): Promise<void> {
  const { seedCatalogue } = await import('./catalogue');
  await seedCatalogue(log);
}

export async function seedDemo(
  log: (s: string) => void = () => undefined,
  opts: SeedOptions = {}
): Promise<SeedResult> {
  const accounts = DEMO_PEOPLE.map((p) => ({ email: p.email, roles: p.roles }));
  if ((await countUsers()) > 0) {
    if (opts.catalogue) await publishCatalogue(log);
    return { created: false, accounts };
  }
  const system = { id: null, label: 'demo seed' };
  for (const p of DEMO_PEOPLE) {
    await createUser({ email: p.email, name: p.name, password: demoPassword(), roles: p.roles }, system);
  }
  log(`[isoledger] seeded ${DEMO_PEOPLE.length} demo accounts`);
  if (opts.catalogue) await publishCatalogue(log);
  return { created: true, accounts };
}
