import type { Role } from './roles';

/** The signed-in person as the request sees them; roles are already capped by a token's ceiling. */
export interface SessionUser {
  id: string;
  email: string;
  name: string;
  roles: Role[];
  /** set when the request came with an API token rather than a session cookie */
  tokenId?: string;
}
