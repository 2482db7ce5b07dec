// The demo scenario: a fictional engineering firm and its projects. Invented for the demo only.
import type { Role } from '../auth/roles';

export const DEMO_FIRM = {
  name: 'Fenwold Lattice Engineering',
  summary:
    'A fictional structural methods group that writes and verifies its own elements for bridge and roof work.'
};

export interface DemoPerson {
  email: string;
  name: string;
  roles: Role[];
}

export const DEMO_PEOPLE: DemoPerson[] = [
  { email: 'admin@example.com', name: 'Ottoline Marsh', roles: ['admin'] },
  { email: 'author@example.com', name: 'Idris Kettleby', roles: ['author'] },
  { email: 'reviewer@example.com', name: 'Saoirse Vantongeren', roles: ['reviewer'] },
  { email: 'lead@example.com', name: 'Benedikt Aarholm', roles: ['lead'] },
  { email: 'auditor@example.com', name: 'Perpetua Onslow', roles: ['auditor'] }
];

export const DEMO_PROJECTS = [
  { key: 'SALTMARSH-FB', title: 'Saltmarsh footbridge deck analysis' },
  { key: 'QUARRY-ROOF', title: 'Old quarry shed roof retrofit' }
];

export function demoPassword(): string {
  return process.env.ISOLEDGER_DEMO_PASSWORD || 'isoledger-demo';
}
