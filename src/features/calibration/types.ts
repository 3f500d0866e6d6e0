/** Shapes of the calibration API (schemas/responses/calibration*.json). */
export interface StandardResidual {
  measurementId: number;
  line: number;
  name: string;
  standardId: number;
  standardName: string;
  kind: 'polarized' | 'unpolarized';
  matchedBy: 'name' | 'position';
  used: boolean;
  note: string | null;
  mjd: number | null;
  q: number;
  u: number;
  qErr: number;
  uErr: number;
  pRef: number;
  thetaRefDeg: number | null;
  pObs: number;
  thetaObsDeg: number;
  thetaObsErrDeg: number;
  offsetDeg: number | null;
  residualDeg: number | null;
  pResidual: number | null;
  qResidual: number | null;
  uResidual: number | null;
  source: string;
}

export interface CalibrationGroup {
  id: number | null;
  state: 'derived' | 'applied' | 'reverted' | 'applying' | 'reverting' | 'failed';
  instrument: string;
  band: string;
  night: string | null;
  zeroPointDeg: number | null;
  zeroPointErrDeg: number | null;
  instrumentalQ: number | null;
  instrumentalU: number | null;
  instrumentalQErr: number | null;
  instrumentalUErr: number | null;
  nPolarized: number;
  nUnpolarized: number;
  rows: number;
  instrumentalChi2: number | null;
  instrumentalDof: number | null;
  zeroPointScatterDeg: number | null;
  appliedAt: string | null;
  appliedBy: { id: number; name: string } | null;
  revertedAt: string | null;
  standards: StandardResidual[];
}

export interface BatchCalibration {
  batchId: number;
  applied: boolean;
  calibrations: CalibrationGroup[];
  uncalibratedRows: number;
}

export interface StandardStar {
  id: number;
  name: string;
  band: string;
  kind: 'polarized' | 'unpolarized';
  p: number;
  pErr: number | null;
  thetaDeg: number | null;
  thetaErrDeg: number | null;
  raDeg: number | null;
  decDeg: number | null;
  source: string;
  fromMemory: boolean;
  note: string | null;
  createdAt: string;
}

export type InstrumentCalibration = Omit<CalibrationGroup, 'standards'> & { batchId: number; filename: string; revertedBy: { id: number; name: string } | null; failureReason: string | null };

export interface PlausibilitySettings {
  pCeiling: number;
  efficiencyMaxPctPerMag: number;
  minPSnr: number;
  inconsistentTailProbability: number;
  flags: { flag: string; description: string }[];
}
