import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

// isolated-vm on Node.js 20 needs every process that loads it started with --no-node-snapshot;
// vitest's forks pool passes it to each test process (worker threads refuse it).
const execArgv = ['--no-node-snapshot'];

export default defineConfig({
  plugins: [tailwindcss(), sveltekit()],
  server: { host: '127.0.0.1', port: 4310, strictPort: false },
  ssr: {
    // native addons and server-only packages stay external to the server bundle
    external: ['isolated-vm', '@node-rs/argon2', 'mariadb', 'sequelize', 'piscina', 'tsx']
  },
  test: {
    pool: 'forks',
    execArgv,
    projects: [
      {
        extends: true,
        test: {
          name: 'unit',
          include: ['tests/unit/**/*.test.ts'],
          sequence: { groupOrder: 0 },
          testTimeout: 60_000
        }
      },
      {
        extends: true,
        test: {
          name: 'integration',
          include: ['tests/integration/**/*.test.ts'],
          sequence: { groupOrder: 1 },
          testTimeout: 120_000,
          hookTimeout: 180_000,
          maxWorkers: 2
        }
      },
      {
        extends: true,
        test: {
          name: 'browser',
          include: ['tests/browser/**/*.test.ts'],
          sequence: { groupOrder: 2 },
          testTimeout: 120_000,
          hookTimeout: 180_000,
          maxWorkers: 1
        }
      }
    ]
  }
});
