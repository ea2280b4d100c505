import { defineConfig } from 'vitest/config';

// Each run gets its own API test database, so parallel runs never drop each other's data.
process.env.DRUMLINE_TEST_DB ??= `drumline_test_${process.pid}`;

// Two projects: pure engine/unit tests run in parallel; API tests share one real
// MariaDB test database and run one file at a time.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'unit',
          include: ['tests/unit/**/*.test.ts', 'server/spectra/**/*.test.ts'],
          testTimeout: 60_000,
        },
      },
      {
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          globalSetup: ['tests/api/global-setup.ts'],
          fileParallelism: false,
          testTimeout: 120_000,
          hookTimeout: 120_000,
        },
      },
      // Opt-in (`npm run test:cluster`): three Galera nodes and two servers, a few minutes.
      ...(process.env.DRUMLINE_CLUSTER_TEST
        ? [
            {
              test: {
                name: 'cluster',
                include: ['tests/cluster/**/*.test.ts'],
                testTimeout: 600_000,
                hookTimeout: 600_000,
              },
            },
          ]
        : []),
    ],
  },
});
