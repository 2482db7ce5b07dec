// Seeds the demo through the same services the application uses (no back door). Only ever called
// by the demo start (`npm start`) and the test harness, never in production mode.
import { countUsers, createUser } from '../auth/users';
import { DEMO_PEOPLE, demoPassword } from './firm';

export interface SeedResult {
  created: boolean;
  accounts: { email: string; roles: string[] }[];
}

export async function seedDemo(log: (s: string) => void = () => undefined): Promise<SeedResult> {
  const accounts = DEMO_PEOPLE.map((p) => ({ email: p.email, roles: p.roles }));
  if ((await countUsers()) > 0) return { created: false, accounts };
  const system = { id: null, label: 'demo seed' };
  for (const p of DEMO_PEOPLE) {
    await createUser({ email: p.email, name: p.name, password: demoPassword(), roles: p.roles }, system);
  }
  log(`[isoledger] seeded ${DEMO_PEOPLE.length} demo accounts`);
  return { created: true, accounts };
}
