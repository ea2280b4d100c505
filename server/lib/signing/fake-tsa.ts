/**
 * A local time-stamping authority for development and tests (docs/certificates.md, "Trusted
 * time"): an HTTP server on the loopback interface that answers RFC 3161 requests with Debian's
 * OpenSSL (`openssl ts -reply`). Its root and TSA certificates are generated once into the
 * ignored folder .keys/fake-tsa/ (the TSA certificate carries the critical extended key usage
 * timeStamping that RFC 3161 section 2.3 requires). A site configures a real authority with
 * TSA_URL and TSA_TRUST_FILE; the fake is never started when TSA_URL is set.
 */
import { execFile } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import http from 'node:http';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { KEYS_DIR } from './keys';

const run = promisify(execFile);

export interface FakeTsaFiles {
  dir: string;
  caCert: string;
  tsaCert: string;
  tsaKey: string;
}

function filesIn(dir: string): FakeTsaFiles {
  return {
    dir,
    caCert: path.join(dir, 'root.crt'),
    tsaCert: path.join(dir, 'tsa.crt'),
    tsaKey: path.join(dir, 'tsa.key'),
  };
}

/**
 * The fake authority's certificates, generated on first use. Generation happens in a private
 * folder that is then renamed into place, so processes starting together agree on one set.
 */
export async function fakeTsaFiles(keysDir = KEYS_DIR): Promise<FakeTsaFiles> {
  const final = filesIn(path.join(keysDir, 'fake-tsa'));
  if (fs.existsSync(final.tsaCert)) return final;
  fs.mkdirSync(keysDir, { recursive: true, mode: 0o700 });
  const tmp = fs.mkdtempSync(path.join(keysDir, 'fake-tsa.tmp-'));
  const f = filesIn(tmp);
  const caKey = path.join(tmp, 'root.key');
  const ext = path.join(tmp, 'tsa.ext');
  fs.writeFileSync(
    ext,
    'basicConstraints=critical,CA:FALSE\nkeyUsage=critical,digitalSignature,nonRepudiation\nextendedKeyUsage=critical,timeStamping\nsubjectKeyIdentifier=hash\n',
  );
  await run('openssl', [
    'req', '-x509', '-newkey', 'rsa:2048', '-nodes', '-keyout', caKey, '-out', f.caCert, '-days', '7300',
    '-subj', '/O=Drumline development/CN=Drumline development time-stamping root',
    '-addext', 'basicConstraints=critical,CA:TRUE', '-addext', 'keyUsage=critical,keyCertSign,cRLSign',
  ]); // prettier-ignore
  const csr = path.join(tmp, 'tsa.csr');
  await run('openssl', [
    'req', '-new', '-newkey', 'rsa:2048', '-nodes', '-keyout', f.tsaKey, '-out', csr,
    '-subj', '/O=Drumline development/CN=Drumline development time-stamping authority',
  ]); // prettier-ignore
  await run('openssl', [
    'x509', '-req', '-in', csr, '-CA', f.caCert, '-CAkey', caKey, '-set_serial', `0x${crypto.randomBytes(8).toString('hex')}`,
    '-days', '7000', '-sha256', '-extfile', ext, '-out', f.tsaCert,
  ]); // prettier-ignore
  for (const x of [caKey, csr, ext]) fs.rmSync(x);
  fs.chmodSync(f.tsaKey, 0o600);
  try {
    fs.renameSync(tmp, final.dir);
  } catch {
    fs.rmSync(tmp, { recursive: true, force: true }); // another process was first: use its set
  }
  if (!fs.existsSync(final.tsaCert)) throw new Error('the development time-stamping certificates could not be made');
  return final;
}

function configText(f: FakeTsaFiles, serialFile: string): string {
  return [
    '[ tsa ]',
    'default_tsa = fake_tsa',
    '[ fake_tsa ]',
    `serial = ${serialFile}`,
    'crypto_device = builtin',
    `signer_cert = ${f.tsaCert}`,
    `signer_key = ${f.tsaKey}`,
    `certs = ${f.caCert}`,
    'signer_digest = sha256',
    // An arc of the example OID space (RFC 7229 reserves 1.3.6.1.5.5.7.0.x for documentation/tests).
    'default_policy = 1.3.6.1.5.5.7.0.1',
    'digests = sha256, sha384, sha512',
    'accuracy = secs:1',
    'ordering = no',
    'tsa_name = yes',
    'ess_cert_id_chain = no',
    'ess_cert_id_alg = sha256',
    '',
  ].join('\n');
}

export interface FakeTsa {
  url: string;
  files: FakeTsaFiles;
  /** Requests answered so far. */
  answered(): number;
  close(): Promise<void>;
}

let started: Promise<FakeTsa> | null = null;

/** Starts (once per process) the fake authority on 127.0.0.1 with a free port. */
export function startFakeTsa(keysDir?: string): Promise<FakeTsa> {
  started ??= (async () => {
    const files = await fakeTsaFiles(keysDir);
    const work = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-tsa-'));
    const serialFile = path.join(work, 'serial');
    fs.writeFileSync(serialFile, `${crypto.randomBytes(8).toString('hex')}\n`);
    const cfg = path.join(work, 'tsa.cnf');
    fs.writeFileSync(cfg, configText(files, serialFile));
    let count = 0;
    let queue: Promise<unknown> = Promise.resolve();
    const answer = (query: Buffer): Promise<Buffer> => {
      const next = queue.then(async () => {
        const id = crypto.randomBytes(6).toString('hex');
        const q = path.join(work, `${id}.tsq`);
        const r = path.join(work, `${id}.tsr`);
        fs.writeFileSync(q, query);
        try {
          await run('openssl', ['ts', '-reply', '-config', cfg, '-queryfile', q, '-out', r]);
          count++;
          return fs.readFileSync(r);
        } finally {
          fs.rmSync(q, { force: true });
          fs.rmSync(r, { force: true });
        }
      });
      queue = next.catch(() => undefined);
      return next;
    };
    const server = http.createServer((req, res) => {
      if (req.method !== 'POST') {
        res.writeHead(405).end();
        return;
      }
      const chunks: Buffer[] = [];
      let size = 0;
      req.on('data', (c: Buffer) => {
        size += c.length;
        if (size > 64 * 1024) req.destroy();
        else chunks.push(c);
      });
      req.on('end', () => {
        answer(Buffer.concat(chunks))
          .then((reply) => res.writeHead(200, { 'content-type': 'application/timestamp-reply' }).end(reply))
          .catch(() => res.writeHead(400).end());
      });
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    server.unref();
    const port = (server.address() as { port: number }).port;
    return {
      url: `http://127.0.0.1:${port}/`,
      files,
      answered: () => count,
      close: () =>
        new Promise<void>((resolve) => {
          server.close(() => resolve());
          fs.rmSync(work, { recursive: true, force: true });
          started = null;
        }),
    };
  })();
  return started;
}
