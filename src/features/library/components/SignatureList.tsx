/** Signatures shown with the record (21 CFR 11.50): printed name, date and time, meaning, statement. */
import { SignatureCards } from '../../../components/SignatureCards';
import type { Signature } from '../api';

export function SignatureList({ signatures, empty = 'Not signed yet.' }: { signatures: Signature[]; empty?: string }) {
  return <SignatureCards signatures={signatures} empty={empty} />;
}
