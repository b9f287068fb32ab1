import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const src = (pkg: string, entry = 'index'): string => fileURLToPath(new URL(`./packages/${pkg}/src/${entry}.ts`, import.meta.url));

export default defineConfig({
  resolve: {
    // Unit tests run against the TypeScript sources; the CLI tests run the built binary.
    // Subpath entries come before the package root, which would otherwise match them first.
    alias: {
      '@pathweave/io/cli': src('io', 'cli/index'),
      '@pathweave/io/plot': src('io', 'plot/index'),
      '@pathweave/geometry': src('geometry'),
      '@pathweave/core': src('core'),
      '@pathweave/io': src('io'),
    },
  },
  test: {
    include: ['packages/*/test/**/*.test.ts', 'test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
  },
});
