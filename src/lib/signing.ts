/** What a signature dialog that sends one mutation takes from the signer and the mutation. */

export interface Signer {
  fullName: string;
  signedOnce: boolean;
}

/**
 * `<SignatureDialog {...mutationSigning(me, save, close)} ... />`: the printed name, the user name
 * asked at the first signing of the session, busy and the error from the mutation, and Cancel
 * that closes the dialog and clears the mutation's error.
 */
export function mutationSigning(
  me: Signer,
  mutation: { isPending: boolean; error: unknown; reset: () => void },
  close: () => void,
) {
  return {
    printedName: me.fullName,
    needsUsername: !me.signedOnce,
    busy: mutation.isPending,
    error: mutation.error,
    onCancel: () => {
      close();
      mutation.reset();
    },
  };
}
