/**
 * Contract of the reference library: request schemas (zod), labels and response shapes. Pure data
 * and zod only: the client imports this file too, so its forms validate with the same rules as
 * the server and its hooks read the same types the routes return.
 *
 * `identityMethodSchema` mirrors the engine's `IdentityMethod` (server/spectra/method.ts); a
 * compile-time check in server/modules/library/engine.ts keeps the two in step, and the service
 * additionally runs the engine's own `validateMethod`, which knows the cross-field rules (grid
 * size, derivative order versus polynomial, ...).
 */
import { z } from 'zod';
import { multiLineText, signatureInput, type SignatureRecord, singleLineText } from '../../lib/contract';

export const TECHNIQUES = ['mid-ir-atr', 'mid-ir-transmission', 'nir'] as const;
export const TECHNIQUE_LABELS: Record<(typeof TECHNIQUES)[number], string> = {
  'mid-ir-atr': 'Mid-IR, ATR',
  'mid-ir-transmission': 'Mid-IR, transmission',
  nir: 'Near-IR',
};

/**
 * Tolerance offered when QA switches the relative band intensity criterion on (a fraction of the
 * strongest band); the engine's DEFAULT_RELATIVE_INTENSITY_TOLERANCE, repeated here so the client
 * does not load the engine (tests/unit/spectra-intensity.test.ts keeps the two equal).
 */
export const SUGGESTED_RELATIVE_INTENSITY_TOLERANCE = 0.15;

const wn = z.number().finite().positive();
const range = z.object({ from: wn, to: wn }).refine((r) => r.from < r.to, { message: 'from must be below to (cm-1).' });
const fraction = z.number().finite().gt(0).lte(1);
const correlationLimit = z.number().finite().gt(-1).lte(1);

/** The engine's DEFAULT_SPECIFICITY_MARGINS, repeated so the client does not load the engine (tests/api/method-control.test.ts keeps them equal). */
export const DEFAULT_MARGINS = {
  correlation: 0.02,
  derivativeCorrelation: 0.02,
  mahalanobis: 0.5,
  residual: 0.25,
  bands: 0,
} as const;

export const specificityMarginsSchema = z.object({
  correlation: z.number().finite().min(0).max(0.5),
  derivativeCorrelation: z.number().finite().min(0).max(0.5),
  mahalanobis: z.number().finite().min(0).max(5),
  residual: z.number().finite().min(0).max(5),
  bands: z.number().int().min(0).max(10),
});

export const identityMethodSchema = z.object({
  technique: z.enum(TECHNIQUES),
  range,
  excludedRegions: z.array(z.object({ from: wn, to: wn, label: singleLineText().min(1).max(80) })).max(20),
  gridStep: z.number().finite().positive().max(50),
  baseline: z.enum(['none', 'offset', 'linear', 'iterative']),
  normalisation: z.enum(['none', 'snv', 'vector']),
  smoothing: z.object({
    windowSize: z.number().int().min(5).max(201),
    polynomial: z.number().int().min(1).max(5),
    derivative: z.union([z.literal(0), z.literal(1), z.literal(2)]),
  }),
  thresholds: z.object({
    minCorrelation: correlationLimit,
    minDerivativeCorrelation: correlationLimit.nullable(),
    maxMahalanobis: z.number().finite().positive().nullable(),
    /** Confidence of the residual (Q) limit derived from the references; absent in methods stored before engine 2.0.0. */
    residualConfidence: z.number().finite().min(0.5).max(0.9999).nullable().optional(),
  }),
  bandTolerance: z.discriminatedUnion('mode', [
    z.object({ mode: z.literal('absolute'), cm1: z.number().finite().gt(0).lte(100) }),
    z.object({ mode: z.literal('relative'), percent: z.number().finite().gt(0).lte(5) }),
  ]),
  widthTolerance: fraction.nullable(),
  peakProminence: fraction.nullable(),
  maxExtraBandProminence: fraction.nullable(),
  /** Relative band intensity tolerance (fraction of the strongest band); absent in methods stored before engine 2.0.0. */
  relativeIntensityTolerance: fraction.nullable().optional(),
  quality: z.object({
    minMaxAbsorbance: z.number().finite().min(0),
    maxAbsorbance: z.number().finite().positive(),
    minSignalToNoise: z.number().finite().min(0),
  }),
  distanceModel: z
    .object({ components: z.number().int().min(1).max(20), minReferences: z.number().int().min(3) })
    .nullable(),
  /** How far another material must stay from each limit at approval (docs/methods.md); absent = defaults. */
  specificityMargins: specificityMarginsSchema.nullable().optional(),
});
export type IdentityMethodInput = z.infer<typeof identityMethodSchema>;

export const reasonSchema = multiLineText().min(3, 'Give a reason (at least 3 characters).').max(2000);
/** A written justification that overrides a gate: at least 20 characters, so it says something. */
export const justificationSchema = multiLineText()
  .min(20, 'Write a justification of at least 20 characters.')
  .max(4000);

export const materialCreateSchema = z.object({
  code: z
    .string()
    .trim()
    .min(2)
    .max(40)
    .regex(/^[A-Z0-9][A-Z0-9._-]*$/, 'Use capital letters, digits, dot, dash or underscore.'),
  name: singleLineText().min(2).max(160),
  grade: singleLineText().max(120).default(''),
  monographRef: singleLineText().max(200).default(''),
  techniques: z.array(z.enum(TECHNIQUES)).min(1, 'Choose at least one technique.'),
  notes: multiLineText().max(4000).nullable().optional(),
  reason: multiLineText().max(2000).optional(),
});
export type MaterialCreate = z.infer<typeof materialCreateSchema>;
/** What a client sends to create a material (defaults not yet applied). */
export type MaterialCreateInput = z.input<typeof materialCreateSchema>;

export const materialUpdateSchema = z.object({
  name: singleLineText().min(2).max(160).optional(),
  grade: singleLineText().max(120).optional(),
  monographRef: singleLineText().max(200).optional(),
  techniques: z.array(z.enum(TECHNIQUES)).min(1).optional(),
  notes: multiLineText().max(4000).nullable().optional(),
  active: z.boolean().optional(),
  reason: reasonSchema,
});
export type MaterialUpdate = z.infer<typeof materialUpdateSchema>;
export type MaterialUpdateInput = z.input<typeof materialUpdateSchema>;

export const methodCreateSchema = z.object({
  /** Full parameters; when absent the new draft copies the latest version (or the engine default). */
  params: identityMethodSchema.optional(),
  changeNote: multiLineText().max(2000).optional(),
});

export const methodUpdateSchema = z.object({
  params: identityMethodSchema.optional(),
  changeNote: multiLineText().max(2000).optional(),
  reason: reasonSchema,
});
export type MethodUpdateInput = z.input<typeof methodUpdateSchema>;

export const bandEditSchema = z.object({
  position: z.number().finite().positive().max(15000),
  /** QA's own assignment text for this band; empty: QA sets none (GMP views then show no assignment). */
  assignment: singleLineText().max(300).optional(),
});
export const bandsUpdateSchema = z.object({
  bands: z.array(bandEditSchema).max(200),
  reason: reasonSchema,
});
export type BandsUpdateInput = z.input<typeof bandsUpdateSchema>;

export const referenceUploadFieldsSchema = z.object({
  supplier: singleLineText().max(160).default(''),
  supplierLot: singleLineText().max(80).default(''),
  measuredHow: multiLineText().max(2000).default(''),
  instrumentId: z.preprocess(
    (v) => (v === '' || v === undefined || v === null ? undefined : v),
    z.coerce.number().int().positive().optional(),
  ),
});
/** The text fields of a reference upload as the client sends them (besides the files). */
export type ReferenceUploadFields = Required<
  Pick<z.input<typeof referenceUploadFieldsSchema>, 'supplier' | 'supplierLot' | 'measuredHow'>
>;

export const referenceStatusQuerySchema = z.object({
  status: z.enum(['draft', 'approved', 'retired']).default('draft'),
});
export const approveReferenceSchema = z.object({
  signature: signatureInput,
  /** A gate override requested and signed by another QA manager; approving confirms it (docs/methods.md). */
  overrideId: z.number().int().positive().optional(),
});
export type ApproveReferenceInput = z.input<typeof approveReferenceSchema>;
export const retireReferenceSchema = z.object({ reason: reasonSchema, signature: signatureInput });
export type RetireReferenceInput = z.input<typeof retireReferenceSchema>;
export const approveMethodSchema = z.object({
  signature: signatureInput,
  /** First version only: the draft references approved with it (default: every draft reference of the material). */
  referenceIds: z.array(z.number().int().positive()).min(1).max(50).optional(),
  /** A gate override requested and signed by another QA manager; approving confirms it (docs/methods.md). */
  overrideId: z.number().int().positive().optional(),
});
export type ApproveMethodInput = z.input<typeof approveMethodSchema>;

/** A request to approve although the specificity gate refuses: the first of two QA signatures. */
export const gateOverrideRequestSchema = z.object({
  justification: justificationSchema,
  changeControl: singleLineText().min(3, 'Name the change-control record (at least 3 characters).').max(80),
  signature: signatureInput,
});
export type GateOverrideRequestInput = z.input<typeof gateOverrideRequestSchema>;

/** QA's signed decision whether identity by IR suits a material, and the test that replaces it. */
export const irSuitabilitySchema = z
  .object({
    suitable: z.boolean(),
    replacementTest: multiLineText().max(2000).optional(),
    reason: reasonSchema,
    signature: signatureInput,
  })
  .refine((v) => v.suitable || (v.replacementTest ?? '').trim().length >= 10, {
    message: 'Name the test that replaces identity by IR (at least 10 characters).',
    path: ['replacementTest'],
  });
export type IrSuitabilityInput = z.input<typeof irSuitabilitySchema>;
export const specificityMatrixQuerySchema = z.object({ technique: z.enum(TECHNIQUES).default('mid-ir-atr') });

// ------------------------------------------------------------------ response shapes

export const METHOD_STATUSES = ['draft', 'approved', 'superseded'] as const;
export type MethodStatus = (typeof METHOD_STATUSES)[number];
export const REFERENCE_STATUSES = ['draft', 'approved', 'retired'] as const;
export type ReferenceStatus = (typeof REFERENCE_STATUSES)[number];

export interface Material {
  id: number;
  code: string;
  name: string;
  grade: string;
  monographRef: string;
  techniques: string[];
  notes: string | null;
  active: boolean;
  createdBy: number;
  createdAt: string;
  updatedAt: string;
}

/** QA's decision in force on identity by IR for a material (null: none taken, IR applies). */
export interface IrSuitability {
  suitable: boolean;
  replacementTest: string | null;
  reason: string;
  decidedByName: string;
  decidedAt: string;
  signatureId: number;
}

export interface MaterialListItem extends Material {
  irSuitability: IrSuitability | null;
  approvedMethod: { id: number; version: number; technique: string } | null;
  draftMethodId: number | null;
  references: { draft: number; approved: number; retired: number };
}

/** An identity method version as the API and the testing module see it. */
export interface MethodVersion {
  id: number;
  materialId: number;
  version: number;
  status: MethodStatus;
  technique: string;
  params: IdentityMethodInput;
  changeNote: string | null;
  supersedesId: number | null;
  createdBy: number;
  createdAt: string;
  updatedAt: string;
  approvedSignatureId: number | null;
  approvedAt: string | null;
}

/** What the approval of a version signed besides the method itself. */
export interface MethodApprovalRecord {
  validationFileId: number;
  validationSha256: string;
  firstReferenceIds: number[];
  gateOverrideId: number | null;
  gate: MethodGateReport;
}

/** A request to override the specificity gate, with its confirmation once given. */
export interface GateOverride {
  id: number;
  entityType: 'identity_method' | 'reference_spectrum';
  entityId: number;
  justification: string;
  changeControl: string;
  requestedBy: number;
  requestedByName: string;
  requestedAt: string;
  confirmedByName: string | null;
  confirmedAt: string | null;
}

export interface MethodWithSignatures extends MethodVersion {
  signatures: SignatureRecord[];
  approval: MethodApprovalRecord | null;
  overrides: GateOverride[];
}

export interface MaterialDetail extends Material {
  irSuitability: IrSuitability | null;
  methods: MethodWithSignatures[];
}

/** A band of a reference as stored (JSON). */
export interface StoredBand {
  position: number;
  prominence?: number;
  width?: number;
  /**
   * The correlation table's candidate text written at upload (or QA's own text on references
   * edited before issue 18). Never shown in GMP views as an assignment: see qaAssignment.
   */
  assignment: string;
  /** The assignment QA set for this band (the band edit while the reference is a draft; signed at approval). */
  qaAssignment?: string;
  /**
   * Derived when read, not stored: what GMP views show as the band's assignment - QA's own text,
   * or null when QA set none (docs/methods.md, "Band assignments").
   */
  shownAssignment?: string | null;
  /** auto: picked by the engine; edited: added or moved by QA. */
  origin: 'auto' | 'edited';
}

/** Correlation-table candidates for one band, ranked by the spectrum's other bands: for QA's information while reviewing a draft. */
export interface BandCandidates {
  position: number;
  candidates: { group: string; range: string; why: string }[];
}

/** What the reading of a reference file noted (stored beside it). */
export interface ReferenceMeta {
  title?: string;
  fileName?: string;
  points?: number;
  originalXUnits?: string;
  originalYUnits?: string;
  warnings?: string[];
  bandsPickedWithMethodVersion?: number;
}

export interface ReferenceSummary {
  id: number;
  materialId: number;
  code: string;
  status: ReferenceStatus;
  technique: string;
  supplier: string;
  supplierLot: string;
  measuredHow: string | null;
  instrumentId: number | null;
  fileId: number;
  bands: StoredBand[];
  meta: ReferenceMeta | null;
  specificity: GateReport | null;
  justification: string | null;
  createdBy: number;
  createdAt: string;
  updatedAt: string;
  approvedSignatureId: number | null;
  approvedMethodId: number | null;
  approvedAt: string | null;
  retiredSignatureId: number | null;
  retireReason: string | null;
}

/** A reference in a list: no bands, meta or gate report, but how many bands it has. */
export interface ReferenceListItem extends Omit<ReferenceSummary, 'bands' | 'meta' | 'specificity'> {
  bandCount: number;
  uploadedByName: string | null;
  /** On the list of a material's references. */
  approvedBy?: { printedName: string; meaning: string; signedAt: string } | null;
  /** On the list of references across materials. */
  materialCode?: string;
  materialName?: string;
}

export interface ReferenceDetail extends ReferenceSummary {
  material: { id: number; code: string; name: string; grade: string } | null;
  uploadedByName: string | null;
  instrument: { id: number; name: string } | null;
  file: { id: number; sha256: string; fileName: string; mediaType: string; size: number; uploadedAt: string } | null;
  signatures: SignatureRecord[];
  overrides: GateOverride[];
  /** Only for a QA manager reading a draft: the table's candidates per band, for information (never an assignment). */
  bandCandidates?: BandCandidates[];
}

export interface OverlayTrace {
  referenceId: number;
  code: string;
  status: ReferenceStatus;
  isThis: boolean;
  x: number[];
  y: number[];
}

export interface ReferenceOverlay {
  referenceId: number;
  traces: OverlayTrace[];
}

// Specificity gate and matrix

/** Anything but "distinct" blocks approval; "not compared" is never "distinct" (docs/methods.md). */
export type GateState = 'would-pass' | 'within-margin' | 'not-compared' | 'distinct';
export const GATE_STATE_LABELS: Record<GateState, string> = {
  'would-pass': 'Would pass',
  'within-margin': 'Within the margin',
  'not-compared': 'Not compared',
  distinct: 'Distinct',
};

export interface SpecificityMarginsValue {
  correlation: number;
  derivativeCorrelation: number;
  mahalanobis: number;
  residual: number;
  bands: number;
}

export interface MethodGateRow {
  otherMaterialId: number;
  otherMaterialCode: string;
  otherMaterialName: string;
  /** other-as-sample: the other's reference judged by this version; this-as-sample: ours judged by the other's method. */
  direction: 'other-as-sample' | 'this-as-sample';
  sampleReferenceCode: string;
  judgedBy: string;
  state: GateState;
  correlation: number | null;
  correlationLimit: number;
  note: string | null;
}

export interface MethodGateReport {
  methodId: number;
  methodVersion: number;
  computedAt: string;
  margins: SpecificityMarginsValue;
  referenceCodes: string[];
  rows: MethodGateRow[];
  offending: MethodGateRow[];
  passed: boolean;
}

export interface DirectionScore {
  state?: GateState;
  verdict: 'pass' | 'fail' | 'invalid';
  correlation: number | null;
  derivativeCorrelation: number | null;
  bandsMatched: string | null;
}

export interface GatePair {
  materialId: number;
  materialCode: string;
  materialName: string;
  referenceId: number;
  referenceCode: string;
  otherAsSample: DirectionScore | null;
  candidateAsSample: DirectionScore | null;
  wouldPass: boolean;
  /** The worse direction (absent in reports stored before the margin rule). */
  state?: GateState;
  /** Why the pair could not be compared (e.g. the other spectrum does not cover the method range). */
  notComparable: string | null;
}

export interface GateReport {
  methodId: number;
  methodVersion: number;
  computedAt: string;
  pairs: GatePair[];
  offending: GatePair[];
  passed: boolean;
  margins?: SpecificityMarginsValue;
}

export interface MatrixCell {
  /** Material whose method and references judge (row). */
  rowMaterialId: number;
  /** Material whose references are scored as samples (column). */
  columnMaterialId: number;
  /** Highest correlation of a column reference against the row's set; null when not computed. */
  correlation: number | null;
  /** Column references that pass the row's test, out of those scored. */
  passing: number;
  scored: number;
  /** would-pass: some column reference passes the row's test (for the diagonal: the set is consistent). */
  state: 'would-pass' | 'within-margin' | 'distinct' | 'not-comparable' | 'self' | 'self-inconsistent' | 'single';
}

export interface MatrixMaterial {
  id: number;
  code: string;
  name: string;
  technique: string;
  methodId: number;
  methodVersion: number;
  references: number;
}

export interface SpecificityMatrix {
  technique: string;
  computedAt: string;
  materials: MatrixMaterial[];
  cells: MatrixCell[];
  /** Off-diagonal pairs that would pass, come within the margin or could not be compared: the library is not shown specific for them. */
  notDiscriminated: { rowMaterialId: number; columnMaterialId: number }[];
}
