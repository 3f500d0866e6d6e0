import type { Knex } from 'knex';
import { route } from '../lib/route.js';
import { idPath, instrumentCodePath } from '../lib/query.js';
import type { CalibrationService } from './service.js';
import type { PlausibilityService } from './plausibility.js';
import { assertMayReadBatch } from './queries.js';

export interface CalibrationDeps {
  db: Knex;
  calibration: CalibrationService;
  plausibility: PlausibilityService;
}

const CUR = ['curator'] as const;
const OWN_BATCHES = 'observers see their own batches only (another observer’s batch answers 404)';

/** Standard stars, a batch's calibration (derive, apply, revert), an instrument's calibration history, plausibility settings. */
export const calibrationRoutes = [
  route<CalibrationDeps>({
    method: 'get', path: '/standard-stars', tag: 'Catalog', who: 'signed-in',
    summary: 'Standard stars: reference p and θ per band, each with its source',
    description: 'Seeded with the standards of Schmidt, Elston & Lupie 1992 (AJ 104, 1563), values from memory (`fromMemory: true`). A batch row is a standard when its name matches (case and spacing ignored: `HD 204827` = `HD204827`) or it lies within 5″ of a recorded position. Angles IAU (north through east), equatorial; p as a fraction.',
    responses: { 200: { description: 'by name, then band', schema: 'responses/calibration-standard-stars' } },
    handler: async (_ctx, { calibration }) => ({ standards: await calibration.standards() }),
  }),
  route<CalibrationDeps>({
    method: 'post', path: '/standard-stars', tag: 'Catalog', who: CUR,
    summary: 'Add a standard star’s reference in one band, with its source',
    description: 'Without `thetaDeg` the star is an unpolarized standard (its p an upper value). One entry per star and band (409 for a second). Audited.',
    body: { schema: 'api/calibration-standard-star', required: true },
    responses: { 201: { description: 'the new entry', schema: 'responses/calibration-standard-star' } },
    errors: [400, 409],
    handler: ({ user, body }, { calibration }) => calibration.addStandard(user.id, body),
  }),
  route<CalibrationDeps, { id: number }>({
    method: 'get', path: '/batches/:id/calibration', tag: 'Review', who: ['observer', 'curator'], whoNote: OWN_BATCHES,
    summary: 'The batch’s calibration from its standard-star rows, per instrument, band and night',
    description: 'Instrumental (q, u): inverse-variance weighted mean over unpolarized standards. Angle zero-point: axial weighted mean of θ_obs − θ_ref over polarized standards after the instrumental (q, u) is subtracted (doubled angles; Mardia & Jupp 2000). Residuals per standard. Nights run from UTC noon to noon. Once applied, the stored calibration is shown (`applied: true`).',
    params: idPath('batch'),
    responses: { 200: { description: 'derived or applied calibrations', schema: 'responses/calibration' } },
    errors: [400, 404],
    handler: async ({ user, params }, { db, calibration }) => {
      await assertMayReadBatch(db, user, params.id);
      return calibration.forBatch(params.id);
    },
  }),
  route<CalibrationDeps, { id: number }>({
    method: 'post', path: '/batches/:id/calibration/apply', tag: 'Review', who: CUR,
    summary: 'Apply the batch’s calibration once',
    description: 'For every row of each instrument, band and night with standards: subtract the instrumental (q, u), rotate by −zero-point (q′ = q cos2ψ + u sin2ψ, u′ = −q sin2ψ + u cos2ψ, so θ′ = θ − ψ), propagate the errors (including those of the terms) and re-derive p, θ, debiased p and the Galactic-frame values. The uploaded file is kept as received; every row is audited with before and after. The rows are written in short transactions; meanwhile the calibration is `applying` (GET …/calibration answers `applied: false` with that state) and another apply or a revert is a 409 (`calibration_in_progress`); an apply interrupted part-way (server stopped) is rolled back from the stored values at start-up and shows as `failed` in the instrument history. A second apply is a 409 (`already_calibrated`); a batch without usable standards is a 409 (`no_standards`); an approved batch is a 409 (`batch_approved`): return it first, calibrate, approve again, so the approved catalog only changes all at once.',
    params: idPath('batch'),
    body: { schema: 'api/calibration-action' },
    responses: { 200: { description: 'applied', schema: 'responses/calibration-apply' } },
    errors: [400, 404, 409],
    handler: ({ user, params, body }, { calibration }) => calibration.apply(user.id, params.id, body?.reason ?? null),
  }),
  route<CalibrationDeps, { id: number }>({
    method: 'post', path: '/batches/:id/calibration/revert', tag: 'Review', who: CUR,
    summary: 'Revert the batch’s applied calibration',
    description: 'Restores each calibrated row to its values before the calibration (audited). 409 when nothing is applied (`not_calibrated`), a calibration is being applied or reverted now (`calibration_in_progress`) or a calibrated row was edited since (`edited_since`, also when a row is edited while the revert is under way: the rows restored so far are put back). Written in short transactions (`reverting` meanwhile). An approved batch is a 409 (`batch_approved`).',
    params: idPath('batch'),
    body: { schema: 'api/calibration-action' },
    responses: { 200: { description: 'reverted', schema: 'responses/calibration-revert' } },
    errors: [400, 404, 409],
    handler: ({ user, params, body }, { calibration }) => calibration.revert(user.id, params.id, body?.reason ?? null),
  }),
  route<CalibrationDeps, { code: string }>({
    method: 'get', path: '/instruments/:code/calibrations', tag: 'Catalog', who: 'signed-in',
    summary: 'An instrument’s history of calibrations, newest first',
    params: instrumentCodePath,
    responses: { 200: { description: 'applied and reverted calibrations', schema: 'responses/calibration-history' } },
    errors: [404],
    handler: ({ params }, { calibration }) => calibration.history(params.code),
  }),
  route<CalibrationDeps>({
    method: 'get', path: '/plausibility', tag: 'Catalog', who: 'signed-in',
    summary: 'Plausibility flags and their thresholds',
    description: 'Flags mark a value for attention, nothing is dropped: `above_efficiency_envelope` (p/E(B−V) > 9 %/mag, Serkowski et al. 1975), `above_p_ceiling`, `low_p_snr` (p/σp < 5: the angle is not Gaussian, Naghizadeh-Khouei & Clarke 1993), `inconsistent_repeats` (χ² tail probability < 0.001 among a star’s repeats in one band and instrument). Filter the review table with `filter.flag=` and the catalog with `flag=`.',
    responses: { 200: { description: 'thresholds and flag descriptions', schema: 'responses/calibration-plausibility' } },
    handler: (_ctx, { plausibility }) => plausibility.settings(),
  }),
  route<CalibrationDeps>({
    method: 'patch', path: '/plausibility', tag: 'Catalog', who: CUR,
    summary: 'Change the ceiling on p',
    body: { schema: 'api/calibration-plausibility', required: true },
    responses: { 200: { description: 'the settings after the change', schema: 'responses/calibration-plausibility' } },
    errors: [400],
    handler: ({ user, body }, { plausibility }) => plausibility.update(user.id, body),
  }),
];
