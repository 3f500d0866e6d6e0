/** Shapes of the review API, from the generated document types (src/lib/api/types.ts). Stokes q, u are fractions; angles in degrees, IAU convention. */
import type { BatchState, DistanceMethod, MeasurementHistory, MeasurementSort, MeasurementState, ReviewRow, SortOrder, StoredMeasurementRow } from '../../lib/api/types';

export type {
  BatchDecision,
  BatchDecisionAnswer,
  Candidate,
  Competing,
  DistanceMethod,
  EditableField,
  MeasurementPage,
  MeasurementSort,
  MeasurementState,
  QueueBatch,
  ReviewRow,
  SortOrder,
} from '../../lib/api/types';

/** Every state in display order: a Record over the generated union, so a state the server adds fails the typecheck until listed. */
const STATE_ORDER: Record<MeasurementState, true> = { pending: true, conflict: true, ambiguous: true, approved: true, rejected: true, withdrawn: true };
export const MEASUREMENT_STATES = Object.keys(STATE_ORDER) as readonly MeasurementState[];

const DISTANCE_METHOD_ORDER: Record<DistanceMethod, true> = { inverse_parallax: true, edsd_mode: true, given: true };
export const DISTANCE_METHODS = Object.keys(DISTANCE_METHOD_ORDER) as readonly DistanceMethod[];

/** The states a batch can be looked up by in the queue. */
export type QueueState = Extract<BatchState, 'awaiting_review' | 'approved' | 'returned'>;
export type QueueSort = 'age' | 'rows' | 'uploader';

export type RowWarning = ReviewRow['warnings'][number];

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

/** A measurement as stored (PATCH answers, 409 details.current): the database row, flags still as JSON text. */
export type StoredMeasurement = Partial<StoredMeasurementRow> & Pick<StoredMeasurementRow, 'id' | 'version' | 'state'>;

export type HistoryEntry = MeasurementHistory['history'][number];
