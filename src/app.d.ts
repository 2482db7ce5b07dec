// See https://svelte.dev/docs/kit/types#app.d.ts
import type { SessionUser } from '$lib/server/auth/types';

declare global {
  namespace App {
    interface Error {
      code?: string;
      message: string;
    }
    interface Locals {
      user: SessionUser | null;
      sessionId: string | null;
      requestId: string;
    }
  }
}

export {};
