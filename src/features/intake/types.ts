/** Shapes of the intake API (base /api/v1). Source identifiers stay text end to end. */
import type { Derived } from '../../../server/measurements/derive';

export type BatchState = 'received' | 'needs_mapping' | 'checking' | 'awaiting_review' | 'failed' | 'approved' | 'returned';
export type RowState = 'accepted' | 'rejected' | 'duplicate' | 'conflict' | 'ambiguous';

/** canonical column name → header in the file */
export type ColumnMapping = Record<string, string>;

export interface BatchCounts {
  rows: number;
  accepted: number;
  rejected: number;
  duplicates: number;
  conflicts: number;
  ambiguous: number;
  newStars: number;
  matchedStars: number;
  warnings: number;
}

export interface MappingProposal {
  headers: string[];
  mapping: ColumnMapping;
  /** canonical → the headers that could each be it */
  ambiguous: Record<string, string[]>;
  /** headers no canonical column claims */
  unmapped: string[];
  /** plain-language descriptions of required columns not yet mapped */
  missing: string[];
  /** first rows, as text, in header order */
  preview: string[][];
}

export interface Batch {
  id: number;
  state: BatchState;
  filename: string;
  sizeBytes: number;
  sha256: string;
  instrument: string | null;
  uploadedBy: { id: number; name: string; email: string };
  createdAt: string;
  updatedAt: string;
  counts: BatchCounts;
  /** rowsTotal: data rows in the file, counted when the check starts; attempts > 1 after an interrupted check (note says why) */
  progress: { bytesDone: number; bytesTotal: number; rowsDone: number; rowsTotal?: number | null; attempts?: number; note?: string | null };
  mapping: ColumnMapping | null;
  proposal: MappingProposal | null;
  failure: string | null;
}

/** The derived values of a row: the server's own type (server/measurements/derive.ts), without its flags. */
export type DerivedValues = Omit<Derived, 'flags' | 'ra_deg' | 'dec_deg' | 'hpx15' | 'q_gal_err' | 'u_gal_err' | 'parallax_mas' | 'parallax_err_mas' | 'ebv'>;

export interface BatchRow {
  /** 1-based line in the file; the header is line 1 */
  line: number;
  state: RowState;
  /** `column` is the file's own header; `field` the Starveil column it feeds */
  errors: { column: string; field?: string; value?: string; message: string }[];
  warnings: { column: string; field?: string; message: string }[];
  values: Record<string, string>;
  star: { id: number; name: string; sourceId: string | null; match: 'source_id' | 'position' | 'new' } | null;
  candidates: { id: number; name: string; sourceId: string | null; separationArcsec: number }[];
  measurementId: number | null;
  measurementState?: string | null;
  /** the measurement this row repeats or conflicts with */
  duplicateOf?: number | null;
  flags?: unknown[];
  derived: DerivedValues | null;
}

export interface IntakeColumn {
  name: string;
  unit: string;
  /** the plain rule, e.g. "one of: q,u,q_err,u_err or p,p_err,theta_deg,theta_err_deg" */
  required: string;
  description: string;
  synonyms: string[];
}

export interface IntakeColumnsResponse {
  columns: IntakeColumn[];
  /** plain statements of the conventions, keyed by topic */
  conventions?: Record<string, string>;
}

export interface Instrument {
  id: number;
  code: string;
  name: string;
  bands: string[];
}

/** `details.fields` of a 400 answer */
export interface FieldProblem {
  field: string;
  message: string;
}
