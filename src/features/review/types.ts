/** Shapes of the review API (base /api/v1). Stokes q, u are fractions; angles in degrees, IAU convention. */
import type { DistanceMethod } from '@science/distance';
import type { BatchCounts, BatchState } from '../intake/types';

export type MeasurementState = 'pending' | 'conflict' | 'ambiguous' | 'approved' | 'rejected' | 'withdrawn';
export const MEASUREMENT_STATES: readonly MeasurementState[] = ['pending', 'conflict', 'ambiguous', 'approved', 'rejected', 'withdrawn'];

export const DISTANCE_METHODS = ['inverse_parallax', 'edsd_mode', 'given'] as const satisfies readonly DistanceMethod[];

/** The states a batch can be looked up by in the queue. */
export type QueueState = Extract<BatchState, 'awaiting_review' | 'approved' | 'returned'>;
export type QueueSort = 'age' | 'rows' | 'uploader';
export type SortOrder = 'asc' | 'desc';

export interface QueueBatch {
  id: number;
  filename: string;
  state: BatchState;
  instrument: string | null;
  counts: BatchCounts | null;
  uploadedBy: { name: string; email: string };
  createdAt: string;
  ageHours: number;
  reviewedAt: string | null;
  reviewNote: string | null;
}

export interface Candidate {
  id: number;
  name: string;
  sourceId: string | null;
  separationArcsec: number;
}

/** The earlier measurement a conflicting one competes with. */
export interface Competing {
  id: number;
  state: MeasurementState;
  mjd: number | null;
  q: number;
  u: number;
  q_err: number;
  u_err: number;
  p: number;
  theta_deg: number;
  batch_id: number;
  /** line of the earlier row in its uploaded file (the row is named "batch N, line M") */
  line?: number | null;
}

export interface RowWarning {
  field?: string;
  column?: string;
  message: string;
}

/** One measurement as the review table lists it. */
export interface ReviewRow {
  id: number;
  state: MeasurementState;
  version: number;
  band: string;
  instrument: string;
  mjd: number | null;
  ra_deg: number;
  dec_deg: number;
  q: number;
  u: number;
  q_err: number;
  u_err: number;
  p: number;
  p_err: number;
  p_debiased: number;
  theta_deg: number;
  theta_err_deg: number;
  theta_gal_deg: number;
  parallax_mas: number | null;
  parallax_err_mas: number | null;
  distance_pc: number | null;
  distance_lo_pc: number | null;
  distance_hi_pc: number | null;
  distance_method: DistanceMethod | null;
  ebv: number | null;
  /** 1-based line in the uploaded file (the header is line 1) */
  line: number;
  star_id: number | null;
  star_name: string | null;
  /** 64-bit identifier, text end to end */
  star_source_id: string | null;
  /** arcsec from the measured position to the tied star (absent from older answers) */
  star_separation_arcsec?: number | null;
  flags: string[];
  warnings: RowWarning[];
  candidates: Candidate[];
  conflicts_with: number | null;
  competing: Competing | null;
}

export type MeasurementSort =
  | 'line' | 'state' | 'band' | 'instrument' | 'mjd' | 'q' | 'u' | 'p' | 'p_debiased' | 'theta_deg' | 'theta_err_deg' | 'distance_pc' | 'star_name';

export interface MeasurementFilters {
  state?: MeasurementState | '';
  band?: string;
  instrument?: string;
  distance_method?: string;
  /** a quality or plausibility flag (GET /plausibility) */
  flag?: string;
  /** star name (part of it) or a whole source_id */
  search?: string;
}

export interface MeasurementListParams extends MeasurementFilters {
  sort: MeasurementSort;
  order: SortOrder;
}

export interface MeasurementPage {
  total: number;
  rows: ReviewRow[];
}

/** The fields PATCH /measurements/:id accepts (canonical names). */
export type EditableField =
  | 'ra_deg' | 'dec_deg' | 'band' | 'instrument' | 'mjd' | 'q' | 'u' | 'q_err' | 'u_err' | 'p' | 'p_err'
  | 'theta_deg' | 'theta_err_deg' | 'parallax_mas' | 'parallax_err_mas' | 'distance_pc' | 'distance_err_pc' | 'ebv';

/** A measurement as stored (PATCH answers, 409 details.current): the database row, flags still as JSON text. */
export type StoredMeasurement = Partial<Omit<ReviewRow, 'flags' | 'warnings'>> & { id: number; version: number; state: MeasurementState; flags_json?: string | null };

export interface HistoryEntry {
  id: number;
  at: string;
  action: string;
  actor: { id?: number; name: string; email: string } | null;
  before: Record<string, unknown> | null;
  after: Record<string, unknown> | null;
  reason: string | null;
}

export interface BatchDecision {
  id: number;
  state: 'approved' | 'returned';
  note: string | null;
  /** withdrawn: approved rows a return took out of the catalog; restored: withdrawn rows approved again */
  counts: { changed: number; conflicts: number; ambiguous: number; withdrawn?: number; restored?: number };
}
