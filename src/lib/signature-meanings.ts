/** The meaning of an e-signature in words (21 CFR 11.50), from the contract's one list (server/lib/contract.ts). */
import { SIGNATURE_MEANING_LABELS, type SignatureMeaning } from '../../server/lib/contract';

export function meaningLabel(meaning: string): string {
  return SIGNATURE_MEANING_LABELS[meaning as SignatureMeaning] ?? meaning;
}
