/** Designations for stars that arrive without a name. */

function pad(n: number, width: number, digits = 0) {
  return n.toFixed(digits).padStart(width + (digits ? digits + 1 : 0), '0');
}

/** IAU-style designation from the position: "SVL J053431.9+220052". */
export function designation(raDeg: number, decDeg: number, prefix = 'SVL'): string {
  const raH = raDeg / 15;
  const h = Math.floor(raH);
  const m = Math.floor((raH - h) * 60);
  const s = Math.floor(((raH - h) * 60 - m) * 600) / 10;
  const sign = decDeg < 0 ? '-' : '+';
  const ad = Math.abs(decDeg);
  const d = Math.floor(ad);
  const dm = Math.floor((ad - d) * 60);
  const ds = Math.floor(((ad - d) * 60 - dm) * 60);
  return `${prefix} J${pad(h, 2)}${pad(m, 2)}${pad(s, 2, 1)}${sign}${pad(d, 2)}${pad(dm, 2)}${pad(ds, 2)}`;
}

