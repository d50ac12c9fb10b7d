import { defaultServerConditions } from 'vite';
import { defineConfig } from 'vitest/config';

const conditions = ['@tuningfork/source', ...defaultServerConditions];

export default defineConfig({
  ssr: { resolve: { conditions } }, // node-environment tests resolve through this
  resolve: { conditions },
  test: {
    include: ['packages/*/test/**/*.test.ts', 'test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 120_000,
  },
});
