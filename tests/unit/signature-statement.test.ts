import { describe, expect, it } from 'vitest';
import { signatureStatement } from '../../src/components/SignatureDialog';

describe('signatureStatement', () => {
  it('completes "By signing I confirm that I ..." with the meaning', () => {
    expect(signatureStatement('performed the identity test of lot L-2026-00007')).toMatch(
      /^By signing I confirm that I performed the identity test of lot L-2026-00007\. /,
    );
  });
  it('never says "I confirm that I confirm" when the meaning is itself a confirmation', () => {
    const s = signatureStatement('confirm, as the second administrator, that Olga Brandt holds the roles Operator');
    expect(s).not.toMatch(/confirm that I confirm/i);
    expect(s).toMatch(/^By signing I confirm, as the second administrator, that Olga Brandt holds/);
  });
});
