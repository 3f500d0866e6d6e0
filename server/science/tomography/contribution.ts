import { propagateStokesErrors, angleIsNonGaussian } from '../polarization';
import { debiasedFractionMAS } from '../debias';
import type { TomographyLayer, TomographySegment } from './types';

type SegmentMeans = Pick<TomographySegment, 'meanQ' | 'meanU' | 'meanQErr' | 'meanUErr'>;

/**
 * One layer's own contribution under the thin-screen model (METHODS.md, tomography step 5):
 * ΔS_k = S̄_k − S̄_{k−1} (S̄_{−1} = 0), errors added in quadrature, then p, θ, σθ by linear
 * propagation and p debiased with the modified asymptotic estimator (Plaszczynski et al. 2014)
 * at b = sqrt((σΔq² + σΔu²)/2). The angle is flagged non-Gaussian below p/σ = 5
 * (Naghizadeh-Khouei & Clarke 1993).
 */
export function layerContribution(seg: SegmentMeans, prev: SegmentMeans | undefined) {
  const deltaQ = seg.meanQ - (prev ? prev.meanQ : 0);
  const deltaU = seg.meanU - (prev ? prev.meanU : 0);
  const deltaQErr = Math.hypot(seg.meanQErr, prev ? prev.meanQErr : 0);
  const deltaUErr = Math.hypot(seg.meanUErr, prev ? prev.meanUErr : 0);
  const pa = propagateStokesErrors(deltaQ, deltaU, deltaQErr, deltaUErr);
  const pDebiased = debiasedFractionMAS(pa.p, Math.sqrt((deltaQErr * deltaQErr + deltaUErr * deltaUErr) / 2));
  const out: Pick<TomographyLayer, 'deltaQ' | 'deltaU' | 'deltaQErr' | 'deltaUErr' | 'p' | 'pErr' | 'pDebiased' | 'thetaDeg' | 'thetaErrDeg' | 'snr' | 'angleNonGaussian'> = {
    deltaQ, deltaU, deltaQErr, deltaUErr,
    p: pa.p, pErr: pa.pErr, pDebiased, thetaDeg: pa.thetaDeg, thetaErrDeg: pa.thetaErrDeg,
    snr: pa.pErr > 0 ? pDebiased / pa.pErr : 0,
    angleNonGaussian: angleIsNonGaussian(pa.p, pa.pErr),
  };
  return out;
}
