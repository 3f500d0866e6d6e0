/**
 * Combining repeated measurements of one star (same band, calibrated, same frame).
 * Inverse-variance weighted means of q and u separately, with the consistency statistic
 *   χ² = Σ (q_i − q̄)²/σq_i² + (u_i − ū)²/σu_i²,   ν = 2(n − 1)
 * and its tail probability (METHODS.md; weighted mean: common practice, e.g. Bevington &
 * Robinson 2003, Data Reduction and Error Analysis, §4.1).
 */
import { chi2SurvivalProbability } from './chi2.js';
import { debiasedFractionMAS } from './debias.js';
import { propagateStokesErrors } from './polarization.js';

/** Tail probability below which repeated measurements are flagged as inconsistent. */
export const INCONSISTENT_TAIL_PROBABILITY = 0.001;

export interface StokesMeasurement {
  q: number;
  u: number;
  qErr: number;
  uErr: number;
}

export interface CombinedMeasurement {
  q: number;
  u: number;
  qErr: number;
  uErr: number;
  p: number;
  pErr: number;
  /** MAS estimator (Plaszczynski et al. 2014) with σ = sqrt((σq² + σu²)/2) of the means. */
  pDebiased: number;
  thetaDeg: number;
  thetaErrDeg: number;
  n: number;
  chi2: number;
  dof: number;
  /** P(χ²_ν ≥ χ²); 1 when n = 1 (nothing to compare). */
  tailProbability: number;
  /** tailProbability < 0.001. */
  inconsistent: boolean;
}

/**
 * q̄ = Σ w_i q_i / Σ w_i with w_i = 1/σq_i², σq̄ = (Σ w_i)^−½; likewise u. Then p, θ and their
 * errors from the means (polarization.ts), χ², ν = 2(n − 1) and the χ² tail probability.
 */
export function combineMeasurements(ms: StokesMeasurement[]): CombinedMeasurement {
  if (ms.length === 0) throw new RangeError('combineMeasurements: no measurements; expected at least one');
  let wq = 0;
  let wu = 0;
  let sq = 0;
  let su = 0;
  ms.forEach((m, i) => {
    for (const [name, v] of [['q', m.q], ['u', m.u]] as const) {
      if (!Number.isFinite(v)) throw new RangeError(`measurement ${i}: ${name} = ${v}; expected a finite number`);
    }
    for (const [name, v] of [['qErr', m.qErr], ['uErr', m.uErr]] as const) {
      if (!(v > 0) || !Number.isFinite(v)) {
        throw new RangeError(`measurement ${i}: ${name} = ${v}; expected a finite number > 0`);
      }
    }
    const a = 1 / (m.qErr * m.qErr);
    const b = 1 / (m.uErr * m.uErr);
    wq += a;
    wu += b;
    sq += a * m.q;
    su += b * m.u;
  });
  const q = sq / wq;
  const u = su / wu;
  const qErr = 1 / Math.sqrt(wq);
  const uErr = 1 / Math.sqrt(wu);
  let chi2 = 0;
  for (const m of ms) {
    chi2 += ((m.q - q) / m.qErr) ** 2 + ((m.u - u) / m.uErr) ** 2;
  }
  const n = ms.length;
  const dof = 2 * (n - 1);
  const tailProbability = dof > 0 ? chi2SurvivalProbability(chi2, dof) : 1;
  const { p, pErr, thetaDeg, thetaErrDeg } = propagateStokesErrors(q, u, qErr, uErr);
  const sigma = Math.sqrt((qErr * qErr + uErr * uErr) / 2);
  return {
    q,
    u,
    qErr,
    uErr,
    p,
    pErr,
    pDebiased: debiasedFractionMAS(p, sigma),
    thetaDeg,
    thetaErrDeg,
    n,
    chi2,
    dof,
    tailProbability,
    inconsistent: tailProbability < INCONSISTENT_TAIL_PROBABILITY,
  };
}
