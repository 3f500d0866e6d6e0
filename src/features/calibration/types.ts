/** Shapes of the calibration API, from the generated document types (src/lib/api/types.ts). */
export type {
  BatchCalibration,
  CalibrationGroup,
  InstrumentCalibration,
  PlausibilitySettings,
  StandardResidual,
  StandardStar,
} from '../../lib/api/types';
