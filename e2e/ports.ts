/**
 * Free loopback ports and per-run database names for the browser tests, fixed once per run.
 * playwright.config.ts is evaluated by the runner and again by every worker; the runner sets the
 * environment variables below at its first evaluation and the workers inherit them, so all agree.
 * A run started with E2E_PORT / DRUMLINE_E2E_DB keeps what it was given.
 */
import { execFileSync } from 'node:child_process';

/** Two free TCP ports on 127.0.0.1, asked from the kernel (listen on port 0) in a child process. */
function freePorts(count: number): number[] {
  const script = `
    const net = require('node:net');
    const servers = [];
    let left = ${count};
    for (let i = 0; i < ${count}; i++) {
      const s = net.createServer();
      servers.push(s);
      s.listen(0, '127.0.0.1', () => { if (--left === 0) { console.log(servers.map((x) => x.address().port).join(' ')); servers.forEach((x) => x.close()); } });
    }`;
  return execFileSync(process.execPath, ['-e', script], { encoding: 'utf8' }).trim().split(' ').map(Number);
}

export function e2eEnvironment(): { port: number; demoPort: number; database: string } {
  if (!process.env.E2E_PORT) {
    const [a, b] = freePorts(2);
    process.env.E2E_PORT = String(a);
    process.env.E2E_DEMO_PORT ??= String(b);
  }
  const port = Number(process.env.E2E_PORT);
  process.env.E2E_DEMO_PORT ??= String(port + 100);
  process.env.DRUMLINE_E2E_DB ??= `drumline_e2e_${port}`;
  return { port, demoPort: Number(process.env.E2E_DEMO_PORT), database: process.env.DRUMLINE_E2E_DB };
}
