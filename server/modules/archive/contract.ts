/**
 * Contract of the archive routes (issue 13 item 6): the lot archive's facts and manifest. Pure
 * types: the client may import it.
 */

/** facts.json of a lot archive: the lot as Drumline held it at export. */
export interface LotFacts {
  lotNumber: string;
  material: { code: string; name: string };
  supplier: string;
  supplierLot: string;
  receivedDate: string;
  containerCount: number;
  identityStatus: string;
  status: string;
  containers: { id: number; seq: number; label: string }[];
  tests: {
    id: number;
    attempt: number;
    status: string;
    signatures: { meaning: string; printedName: string; signedAt: string }[];
  }[];
  measurements: {
    id: number;
    testId: number;
    container: string;
    verdict: string;
    matchScore: number | null;
    /** Path of the raw file inside the archive. */
    rawFile: string;
    rawSha256: string;
  }[];
  certificates: {
    number: string;
    file: string;
    sha256: string;
    issuedAt: string;
    supersedesId: number | null;
    current: boolean;
  }[];
  investigations: { id: number; number: string; status: string }[];
  auditEvents: number;
}

/** manifest.json of a lot archive: every other file with its size and SHA-256. */
export interface ArchiveManifest {
  format: 'drumline-lot-archive/1';
  site: string;
  lotNumber: string;
  exportedAt: string;
  exportedBy: string;
  files: { name: string; bytes: number; sha256: string }[];
  note: string;
}
