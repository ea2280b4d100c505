import { defineConfig, devices } from '@playwright/test';
import { e2eEnvironment } from './e2e/ports';

// Browser tests in Debian's Chromium (no Playwright browser download). The web server builds the
// client and runs Drumline against its own fresh database (scripts/e2e-server.sh). Every run picks
// free loopback ports and databases named after its port (e2e/ports.ts), so two runs, or an app on
// the default ports, never collide; the teardown drops the run's databases.
// The second server holds the full demo site (scripts/e2e-demo-server.sh; e2e/demo-roles.spec.ts).
const { port, demoPort } = e2eEnvironment();

export default defineConfig({
  testDir: './e2e',
  outputDir: process.env.E2E_OUTPUT_DIR ?? `test-results/${port}`,
  globalTeardown: './e2e/global-teardown.ts',
  workers: 1,
  fullyParallel: false,
  retries: 0,
  timeout: 120_000,
  expect: { timeout: 10_000 },
  reporter: process.env.CI
    ? [['list']]
    : [['list'], ['html', { open: 'never', outputFolder: `playwright-report/${port}` }]],
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
      reuseExistingServer: false,
      timeout: 180_000,
      stdout: 'pipe',
      stderr: 'pipe',
    },
    {
      command: 'bash scripts/e2e-demo-server.sh',
      url: `http://127.0.0.1:${demoPort}/api/health`,
      reuseExistingServer: false,
      timeout: 600_000,
      stdout: 'pipe',
      stderr: 'pipe',
    },
  ],
});
