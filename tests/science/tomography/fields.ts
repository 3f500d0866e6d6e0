/**
 * Synthetic fields shared by the tomography tests. Common set-up (our choice, not from a
 * source): 40 stars uniform in distance out to 1000 pc, parallax errors 1–5 %, σq = σu
 * 0.1–0.3 % (log-uniform), clouds of p = 1.5 % (S/N of a layer mean ≈ 15–25), no intrinsic
 * scatter unless stated.
 */
import { mulberry32, hashSeed } from '../../../server/science/random';
import { synthesizeField, type SynthesizeOptions, type SyntheticField } from '../../../server/science/tomography/synthesize';

export const FIELD_STARS = 40;
export const FIELD_MAX_PC = 1000;

export function oneCloudField(i: number, extra: Partial<SynthesizeOptions> = {}): SyntheticField {
  const r = mulberry32(hashSeed('one-cloud', i));
  return synthesizeField({
    clouds: [{ distancePc: 200 + 600 * r(), p: 0.015, thetaDeg: 180 * r() }],
    nStars: FIELD_STARS, maxDistancePc: FIELD_MAX_PC, seed: `one-${i}`, ...extra,
  });
}

/** Two clouds whose fields differ by +60° (near one at 250–450 pc, far one at 600–850 pc). */
export function twoCloudField(i: number): SyntheticField {
  const r = mulberry32(hashSeed('two-cloud', i));
  const theta = 180 * r();
  return synthesizeField({
    clouds: [
      { distancePc: 250 + 200 * r(), p: 0.015, thetaDeg: theta },
      { distancePc: 600 + 250 * r(), p: 0.015, thetaDeg: theta + 60 },
    ],
    nStars: FIELD_STARS, maxDistancePc: FIELD_MAX_PC, seed: `two-${i}`,
  });
}

/** Three clouds 60° apart in field angle at 150–300, 420–580 and 700–850 pc. */
export function threeCloudField(i: number): SyntheticField {
  const r = mulberry32(hashSeed('three-cloud', i));
  const theta = 180 * r();
  return synthesizeField({
    clouds: [
      { distancePc: 150 + 150 * r(), p: 0.015, thetaDeg: theta },
      { distancePc: 420 + 160 * r(), p: 0.015, thetaDeg: theta + 60 },
      { distancePc: 700 + 150 * r(), p: 0.015, thetaDeg: theta + 120 },
    ],
    nStars: FIELD_STARS, maxDistancePc: FIELD_MAX_PC, seed: `three-${i}`,
  });
}
