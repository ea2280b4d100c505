import { defineConfig, devices } from '@playwright/test';

// Browser tests in Debian's Chromium (no Playwright browser download). The web server builds the
// client and runs Drumline against its own fresh database `drumline_e2e` (scripts/e2e-server.sh).
// Two runs side by side on one machine need their own E2E_PORT, DRUMLINE_E2E_DB (drumline_*) and
// E2E_OUTPUT_DIR, e.g. E2E_PORT=4174 DRUMLINE_E2E_DB=drumline_e2e_b E2E_OUTPUT_DIR=test-results/b.
const port = Number(process.env.E2E_PORT ?? 4173);
// Second server with the full demo site (scripts/e2e-demo-server.sh; e2e/demo-roles.spec.ts).
const demoPort = Number(process.env.E2E_DEMO_PORT ?? port + 100);

export default defineConfig({
  testDir: './e2e',
  outputDir: process.env.E2E_OUTPUT_DIR ?? 'test-results',
  workers: 1,
  fullyParallel: false,
  retries: 0,
  timeout: 120_000,
  expect: { timeout: 10_000 },
  reporter: process.env.CI ? [['list']] : [['list'], ['html', { open: 'never' }]],
  use: { baseURL: `http://127.0.0.1:${port}`, trace: 'retain-on-failure', screenshot: 'only-on-failure' },
  projects: [
    {
      name: 'debian-chromium',
      use: {
        ...devices['Desktop Chrome'],
        launchOptions: {
          executablePath: '/usr/bin/chromium',
          args: [
            '--no-sandbox',
            '--disable-gpu',
            '--disable-quic',
            '--no-first-run',
            '--disable-background-networking',
            '--disable-component-update',
            '--disable-sync',
          ],
        },
      },
    },
  ],
  // Started one after the other: the demo server serves the client the first one built.
  webServer: [
    {
      command: 'bash scripts/e2e-server.sh',
      url: `http://127.0.0.1:${port}/api/health`,
      reuseExistingServer: !process.env.CI,
      timeout: 180_000,
      stdout: 'pipe',
      stderr: 'pipe',
    },
    {
      command: 'bash scripts/e2e-demo-server.sh',
      url: `http://127.0.0.1:${demoPort}/api/health`,
      reuseExistingServer: !process.env.CI,
      timeout: 600_000,
      stdout: 'pipe',
      stderr: 'pipe',
    },
  ],
});
