const TOPIC: Record<string, string> = {
  fractions: 'Fractions, or percent with _pct',
  angles: 'Angles',
  angleFrame: 'Angle frame',
  positions: 'Positions',
  sourceId: 'Identifiers are text',
  parallax: 'Parallax',
};

/**
 * The conventions every uploaded file is read with. The server's own statements win when it
 * sends them (GET /intake/columns → conventions); the text below is the fallback.
 */
export function Conventions({ fromServer, className = 'space-y-3' }: { fromServer?: Record<string, string>; className?: string }) {
  if (fromServer && Object.keys(fromServer).length > 0) {
    return (
      <ul className={`text-sm text-ink ${className}`} data-testid="conventions">
        {Object.entries(fromServer).map(([k, v]) => (
          <li key={k}>
            <b className="text-night">{TOPIC[k] ?? k}.</b> {v}
          </li>
        ))}
      </ul>
    );
  }
  return (
    <ul className={`text-sm text-ink ${className}`} data-testid="conventions">
      <li>
        <b className="text-night">Fractions, or percent with _pct.</b> q, u, p and their errors are fractions (0.012). A column
        holding percent (1.2) must be mapped to the _pct twin — <code>p_pct</code>, <code>q_err_pct</code> — and is divided by 100 on
        the way in.
      </li>
      <li>
        <b className="text-night">Angles in degrees, IAU convention.</b> The polarization angle θ is measured from north through
        east, in [0°, 180°).
      </li>
      <li>
        <b className="text-night">Angle frame.</b> <code>angle_frame</code> says whether θ and q, u are measured from equatorial
        north (<code>equatorial</code>) or from Galactic north (<code>galactic</code>); Starveil keeps both frames.
      </li>
      <li>
        <b className="text-night">Positions.</b> <code>ra_deg</code> and <code>dec_deg</code> are ICRS degrees; sexagesimal text
        such as <code>05:34:31.9</code> or <code>5h34m31.9s</code> (right ascension in hours) and <code>+22 00 52</code> or <code>-05:23:28</code> (declination in degrees) is accepted too. Galactic{' '}
        <code>glon_deg</code>, <code>glat_deg</code> may stand in for them.
      </li>
      <li>
        <b className="text-night">Identifiers are text.</b> <code>source_id</code> is kept exactly as written, digit for digit; it is
        never turned into a number, so long identifiers lose nothing.
      </li>
      <li>
        <b className="text-night">Distance.</b> Give <code>parallax_mas</code> with <code>parallax_err_mas</code>, or{' '}
        <code>distance_pc</code> with <code>distance_err_pc</code>.
      </li>
    </ul>
  );
}
