/**
 * The API's shapes for the client, taken from the generated document types (schema.gen.ts, made by
 * `npm run gen` from the server's schemas): one name per shape, nothing copied by hand. A feature
 * imports its types from here; where the document does not describe something yet, the local type
 * below says so and the request to describe it stands in /work/coord/REQUESTS.md.
 */
import type { components, paths } from './schema.gen';

type S = components['schemas'];
/** The JSON answer (200, else 201, else 202) of an operation. */
type Json<P extends keyof paths, M extends keyof paths[P]> = paths[P][M] extends { responses: infer R }
  ? R extends { 200: { content: { 'application/json': infer B } } }
    ? B
    : R extends { 201: { content: { 'application/json': infer B } } }
      ? B
      : R extends { 202: { content: { 'application/json': infer B } } }
        ? B
        : never
  : never;
/** The query parameters of an operation. */
type Query<P extends keyof paths, M extends keyof paths[P]> = paths[P][M] extends { parameters: { query?: infer Q } } ? NonNullable<Q> : never;

// ---- errors ------------------------------------------------------------------------------------
/** Every error answer: {"error": {code, message, details?}} (the client's ApiError carries its parts). */
export type ErrorBody = S['responses.error'];
/** `details.fields` of a 400 answer */
export type FieldProblem = NonNullable<NonNullable<ErrorBody['error']['details']>['fields']>[number];

// ---- session -----------------------------------------------------------------------------------
export type SessionUser = S['responses.session-user'];
export type Role = SessionUser['role'];

// ---- intake ------------------------------------------------------------------------------------
export type Batch = S['responses.batch'];
export type BatchState = Batch['state'];
export type BatchCounts = S['responses.batch.counts'];
export type BatchList = S['responses.batches'];
/** canonical column name → header in the file */
export type ColumnMapping = S['api.batch-mapping']['mapping'];
export type MappingProposal = NonNullable<Batch['proposal']>;
export type BatchRowsPage = S['responses.batch-rows'];
export type BatchRow = BatchRowsPage['rows'][number];
export type RowState = BatchRow['state'];
/** The derived values of a row, as GET /batches/:id/rows gives them. */
export type DerivedValues = NonNullable<BatchRow['derived']>;
/** A problem with one value of a row (error or warning): `column` the file's header, `field` the canonical column. */
export type Issue = S['responses.issue'];
export type IntakeColumnsResponse = S['responses.intake-columns'];
export type IntakeColumn = IntakeColumnsResponse['columns'][number];
export type Instrument = S['responses.instrument'];
export type InstrumentList = S['responses.instruments'];
export type InstrumentBand = Instrument['bands'][number];
/** The bodies of POST /instruments and PATCH /instruments/:code. */
export type InstrumentCreate = S['api.instrument-create'];
export type InstrumentUpdate = S['api.instrument-update'];

// ---- review ------------------------------------------------------------------------------------
export type StoredMeasurementRow = S['responses.stored-measurement'];
export type MeasurementState = StoredMeasurementRow['state'];
export type DistanceMethod = NonNullable<StoredMeasurementRow['distance_method']>;
export type ReviewQueue = S['responses.review-queue'];
export type QueueBatch = ReviewQueue['batches'][number];
export type MeasurementPage = S['responses.batch-measurements'];
export type ReviewRow = MeasurementPage['rows'][number];
export type Candidate = ReviewRow['candidates'][number];
/** The earlier measurement a conflicting one competes with. */
export type Competing = NonNullable<ReviewRow['competing']>;
export type MeasurementListQuery = Query<'/batches/{id}/measurements', 'get'>;
export type MeasurementSort = NonNullable<MeasurementListQuery['sort']>;
export type SortOrder = NonNullable<MeasurementListQuery['order']>;
export type BatchDecision = S['responses.batch-decision'];
/** 202 from approve/return: a large decision being applied on the worker (counts null, settling progress). */
export type BatchDecisionStarted = S['responses.batch-decision-started'];
export type BatchDecisionAnswer = BatchDecision | BatchDecisionStarted;
export type MeasurementHistory = S['responses.measurement-history'];
export type MeasurementEditAnswer = S['responses.measurement-edit'];
/** The body of PATCH /measurements/:id. */
export type MeasurementPatch = S['api.measurement-patch'];

/**
 * The fields PATCH /measurements/:id accepts (canonical names). LOCAL until the document lists
 * them: schemas/api/measurement-patch.json gives `changes` no property names (requested).
 */
export const EDITABLE_FIELDS = [
  'ra_deg', 'dec_deg', 'band', 'instrument', 'mjd', 'q', 'u', 'q_err', 'u_err', 'p', 'p_err',
  'theta_deg', 'theta_err_deg', 'parallax_mas', 'parallax_err_mas', 'distance_pc', 'distance_err_pc', 'ebv',
] as const;
export type EditableField = (typeof EDITABLE_FIELDS)[number];

/** GET /batches/:id/decision: the curator's decision and note, for the uploader. */
export type BatchDecisionRecord = Json<'/batches/{id}/decision', 'get'>;
export type BatchRef = NonNullable<BatchDecisionRecord['replaces']>;

// ---- calibration -------------------------------------------------------------------------------
export type PlausibilitySettings = S['responses.calibration-plausibility'];
export type BatchCalibration = Json<'/batches/{id}/calibration', 'get'>;
export type CalibrationGroup = BatchCalibration['calibrations'][number];
export type StandardResidual = CalibrationGroup['standards'][number];
export type CalibrationApplied = Json<'/batches/{id}/calibration/apply', 'post'>;
export type CalibrationReverted = Json<'/batches/{id}/calibration/revert', 'post'>;
export type InstrumentCalibrationHistory = Json<'/instruments/{code}/calibrations', 'get'>;
export type InstrumentCalibration = InstrumentCalibrationHistory['calibrations'][number];
export type StandardStarList = Json<'/standard-stars', 'get'>;
export type StandardStar = StandardStarList['standards'][number];
/** The body of POST /standard-stars. */
export type StandardStarRequest = S['api.calibration-standard-star'];

// ---- overview, accounts, tokens, outbox ---------------------------------------------------------
export type Overview = Json<'/overview', 'get'>;
export type AccountList = Json<'/admin/users', 'get'>;
export type Account = AccountList['users'][number];
export type TokenList = Json<'/tokens', 'get'>;
export type ApiToken = TokenList['tokens'][number];
export type CreatedToken = Json<'/tokens', 'post'>;
export type OutboxPage = Json<'/admin/outbox', 'get'>;
export type OutboxMessage = OutboxPage['messages'][number];

// ---- catalog -----------------------------------------------------------------------------------
export type Star = S['responses.star'];
export type StarList = S['responses.stars'];
export type StarDetail = S['responses.star-detail'];
export type StarQuery = Query<'/stars', 'get'>;

// ---- tomography, sky and masks -----------------------------------------------------------------
export type Run = S['responses.tomography-run'];
export type RunState = Run['state'];
export type RunParams = S['responses.tomography-run.params'];
export type RunList = S['responses.tomography-runs'];
/** The body of POST /tomography/runs. */
export type RunRequest = S['api.tomography-run'];
export type RunSummary = S['responses.run-summary'];
export type RunCells = S['responses.tomography-cells'];
export type SkyCell = RunCells['cells'][number];
export type SightlineAnswer = S['responses.sightlines'];
export type Sightline = S['responses.sightline'];
/** The parts of a sightline answer (the $defs of responses/sightline). */
type SightlinePart<K extends 'layer' | 'jump' | 'segment' | 'star'> = S[`responses.sightline.${K}`];
export type TomographyLayer = SightlinePart<'layer'>;
export type TomographyJump = SightlinePart<'jump'>;
export type TomographySegment = SightlinePart<'segment'>;
export type TomographyStar = SightlinePart<'star'>;
export type MaskSummary = S['responses.mask'];
export type MaskCell = MaskSummary['cells'][number];
export type CellCriteria = S['responses.cell-criteria'];
export type Release = S['responses.release'];
export type ReleaseList = S['responses.releases'];
export type { Json as OperationAnswer, Query as OperationQuery };
