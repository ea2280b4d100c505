/**
 * PDF signing without a database: the site signing identity (generated or configured PKCS#12),
 * the CAdES signed attributes, and Drumline's own verifier against tampering. pdfsig and
 * OpenSSL check the same signatures in tests/api/certificates.test.ts.
 * RFC 5652 (CMS) section 5.4: the signature covers the DER SET OF signed attributes;
 * RFC 5035: ESS signing-certificate-v2 carries the SHA-256 of the signer certificate.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import forge from 'node-forge';
import { afterAll, describe, expect, it } from 'vitest';
import { renderPdf } from '../../server/lib/pdf';
import {
  extractSignatureDer,
  generateSigningP12,
  getSigningIdentity,
  loadSigningMaterial,
  OID,
  signPdf,
  verifyPdfSignature,
} from '../../server/lib/signing';

const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-sign-'));
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

const info = {
  reason: 'Identity certificate IC-2026-00007 for lot RM-2026-00042',
  location: 'Test site',
  name: 'Test site identity certificates',
};

async function samplePdf(text = 'Lot RM-2026-00042: µ ✓ cm⁻¹') {
  return renderPdf({
    content: [text, { text: 'bold', bold: true }],
    footer: (p: number, n: number) => ({ text: `Page ${p} of ${n}` }),
  });
}

describe('signing identity', () => {
  it('is generated once into the keys folder (mode 0600) and reused with the same fingerprint', () => {
    const keysDir = path.join(dir, 'generated');
    const a = getSigningIdentity({ siteName: 'Elmstead Works', keysDir });
    const b = getSigningIdentity({ siteName: 'Elmstead Works', keysDir });
    expect(a.fingerprint).toMatch(/^[0-9a-f]{64}$/);
    expect(b.fingerprint).toBe(a.fingerprint);
    expect(a.subject).toContain('CN=Elmstead Works identity certificates');
    expect(a.source).toBe('generated');
    expect(new Date(a.notAfter).getTime() - Date.now()).toBeGreaterThan(9 * 365 * 86_400_000);
    for (const f of ['signing.p12', 'signing.passphrase'])
      expect(fs.statSync(path.join(keysDir, f)).mode & 0o777).toBe(0o600);
    // The fingerprint is the SHA-256 of the DER certificate inside the p12.
    const m = loadSigningMaterial({ siteName: 'Elmstead Works', keysDir });
    expect(createHash('sha256').update(m.certDer).digest('hex')).toBe(a.fingerprint);
    // keyUsage: digitalSignature + nonRepudiation
    const ku = m.cert.getExtension('keyUsage') as { digitalSignature?: boolean; nonRepudiation?: boolean } | null;
    expect(ku).toMatchObject({ digitalSignature: true, nonRepudiation: true });
  });

  it('uses a configured PKCS#12 and refuses a wrong passphrase', () => {
    const p12Path = path.join(dir, 'site.p12');
    fs.writeFileSync(p12Path, generateSigningP12('Configured Site QA', 'right-passphrase'));
    const id = getSigningIdentity({
      siteName: 'ignored',
      signingP12Path: p12Path,
      signingP12Passphrase: 'right-passphrase',
    });
    expect(id.source).toBe('configured');
    expect(id.subject).toContain('CN=Configured Site QA');
    expect(() =>
      getSigningIdentity({ siteName: 'ignored', signingP12Path: p12Path, signingP12Passphrase: 'wrong' }),
    ).toThrow(/cannot be opened/);
    expect(() => getSigningIdentity({ siteName: 'ignored', signingP12Path: path.join(dir, 'missing.p12') })).toThrow(
      /does not exist/,
    );
  });
});

describe('signature and verification', () => {
  const settings = { siteName: 'Elmstead Works', keysDir: path.join(dir, 'generated') };

  it('signs with CAdES signed attributes and verifies', async () => {
    const { pdf, fingerprint } = await signPdf(await samplePdf(), info, settings);
    expect(pdf.toString('latin1')).toContain('/SubFilter /ETSI.CAdES.detached');
    const v = verifyPdfSignature(pdf);
    expect(v).toMatchObject({
      signed: true,
      valid: true,
      fingerprint,
      coversWholeFile: true,
      hasSigningCertificateV2: true,
    });

    // The signed attributes hold exactly contentType, signingTime, messageDigest, signingCertificateV2.
    const cms = forge.asn1.fromDer(forge.util.createBuffer(extractSignatureDer(pdf)!.toString('binary')));
    const p7 = forge.pkcs7.messageFromAsn1(cms) as unknown as {
      rawCapture: { authenticatedAttributes: forge.asn1.Asn1[] };
    };
    const oids = p7.rawCapture.authenticatedAttributes
      .map((a) => forge.asn1.derToOid((a.value as forge.asn1.Asn1[])[0].value as string))
      .sort();
    expect(oids).toEqual([OID.contentType, OID.messageDigest, OID.signingTime, OID.signingCertificateV2].sort());
  });

  it('says what is wrong: a changed byte, appended content, no signature', async () => {
    const { pdf } = await signPdf(await samplePdf(), info, settings);
    const changed = Buffer.from(pdf);
    const at = changed.indexOf('Identity certificate IC-2026-00007');
    changed[at] = 'i'.charCodeAt(0);
    expect(verifyPdfSignature(changed)).toMatchObject({ signed: true, valid: false });
    expect(verifyPdfSignature(changed).problem).toMatch(/changed after signing/);

    const appended = Buffer.concat([pdf, Buffer.from('\n% appended after signing\n')]);
    const a = verifyPdfSignature(appended);
    expect(a.valid).toBe(false);
    expect(a.coversWholeFile).toBe(false);

    expect(verifyPdfSignature(await samplePdf())).toMatchObject({
      signed: false,
      valid: false,
      problem: 'The file carries no digital signature.',
    });
  });

  it('detects a signature made with another key over the same content (RSA check)', async () => {
    const { pdf } = await signPdf(await samplePdf(), info, settings);
    const other = await signPdf(await samplePdf(), info, { siteName: 'Other', keysDir: path.join(dir, 'other') });
    // Put the other document's RSA signature value into this one's CMS (same length, 2048-bit keys).
    const hexA = pdf.toString('latin1');
    const sigOf = (b: Buffer) => {
      const der = extractSignatureDer(b)!;
      const raw = der.toString('hex');
      const cms = forge.asn1.fromDer(forge.util.createBuffer(der.toString('binary')));
      const p7 = forge.pkcs7.messageFromAsn1(cms) as unknown as { rawCapture: { signature: string } };
      return { raw, sig: Buffer.from(p7.rawCapture.signature, 'binary').toString('hex') };
    };
    const a = sigOf(pdf);
    const b = sigOf(other.pdf);
    expect(a.sig).not.toBe(b.sig);
    const swapped = Buffer.from(hexA.replace(a.raw, a.raw.replace(a.sig, b.sig)), 'latin1');
    const v = verifyPdfSignature(swapped);
    expect(v.valid).toBe(false);
    expect(v.problem).toMatch(/RSA signature/);
  });
});
