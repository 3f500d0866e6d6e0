import { frameName } from '../sky/format';
import type { CoordSys } from '../types';

/** How to read the angles, and how they relate to dust emission maps. */
export function AngleNote({ frame }: { frame: CoordSys }) {
  return (
    <div data-testid="angle-note" className="space-y-1.5 text-sm text-ink">
      <p>
        θ is the polarization angle in degrees, IAU convention: measured from {frameName(frame)} north through east, in [0°, 180°). Stokes q and u refer to the same frame and are shown in per cent
        (the API gives fractions).
      </p>
      <p>
        Starlight polarization runs parallel to the plane-of-sky magnetic field, so θ is the field’s direction. Thermal dust emission is polarized perpendicular to the field: add 90° to θ before comparing
        it with the angle of an emission map.
      </p>
    </div>
  );
}
