/**
 * The conclusion of an investigation of a trend signal, after its phase I check: a written
 * conclusion and the e-signature. It changes no result, lot or certificate (docs/trending.md).
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { useConclude, type InvestigationDetail } from '../api';
import { mutationSigning } from '../../../lib/signing';
import { Panel } from '../../../components/Panel';

export function ConcludeForm({ inv, me }: { inv: InvestigationDetail; me: { fullName: string; signedOnce: boolean } }) {
  const conclude = useConclude(inv.id);
  const [signing, setSigning] = useState(false);
  return (
    <Panel id="conclude" title="Conclusion" className="flex flex-col gap-3 p-4" titleClassName="text-lg">
      <p className="text-sm text-muted">
        What the investigation found about the drift and what follows (e.g. the supplier changed a process step, extra
        sampling of the next deliveries, a new baseline). No result, lot or certificate changes.
      </p>
      <div>
        <Button variant="primary" onClick={() => setSigning(true)}>
          Sign the conclusion
        </Button>
      </div>
      <ReasonSignatureDialog
        open={signing}
        title="Conclude the investigation of the trend signal"
        meaningText="conclude this investigation of a trend signal as written"
        record={`Investigation ${inv.number}, ${inv.materialName}`}
        confirmLabel="Close the investigation"
        reason={{
          label: 'Conclusion',
          minLength: 20,
          tooShort: 'Write a conclusion of at least 20 characters.',
        }}
        {...mutationSigning(me, conclude, () => setSigning(false))}
        onSign={(signature, conclusion) =>
          conclude.mutate({ conclusion, signature }, { onSuccess: () => setSigning(false) })
        }
      />
    </Panel>
  );
}
