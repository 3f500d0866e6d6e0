import { useSearchParams } from 'react-router-dom';
import { Card, Notice, PageTitle } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useStars } from '../api/stars';
import { usePlausibility } from '../../../lib/api/plausibility';
import { CatalogSearch, type FieldProblem } from '../components/CatalogSearch';
import { PAGE_SIZES, StarsTable } from '../components/StarsTable';
import type { Cone, StarSort } from '../types';

const SORTS: StarSort[] = ['id', 'name', 'source_id', 'ra_deg', 'dec_deg', 'glon_deg', 'glat_deg', 'parallax_mas', 'n_measurements'];

/** The search, the sort and the page live in the address, so a star page's back link returns to the same list. */
export function CatalogPage() {
  const [sp, setSp] = useSearchParams();
  const q = sp.get('q') ?? '';
  const galactic = sp.has('l') || sp.has('b');
  const cone: Cone | null = galactic
    ? { ra: sp.get('l') ?? '', dec: sp.get('b') ?? '', radius: sp.get('radius') ?? '', frame: 'galactic' }
    : sp.has('ra') || sp.has('dec') || sp.has('radius') ? { ra: sp.get('ra') ?? '', dec: sp.get('dec') ?? '', radius: sp.get('radius') ?? '', frame: 'icrs' } : null;
  const flag = sp.get('flag') ?? '';
  const plausibility = usePlausibility();
  const sort = (SORTS.includes(sp.get('sort') as StarSort) ? sp.get('sort') : 'id') as StarSort;
  const order = sp.get('order') === 'desc' ? 'desc' : 'asc';
  const pageSize = PAGE_SIZES.includes(Number(sp.get('per'))) ? Number(sp.get('per')) : 50;
  const page = Math.max(0, Math.floor(Number(sp.get('page') ?? 1)) - 1 || 0);
  const stars = useStars({ q: q || undefined, cone: cone ?? undefined, flag: flag || undefined, sort, order, limit: pageSize, offset: page * pageSize });

  const update = (changes: Record<string, string | null>, keepPage = false) => {
    const next = new URLSearchParams(sp);
    for (const [k, v] of Object.entries(changes)) {
      if (v === null || v === '') next.delete(k);
      else next.set(k, v);
    }
    if (!keepPage) next.delete('page');
    setSp(next);
  };
  const problems: FieldProblem[] = stars.error instanceof ApiError ? ((stars.error.details as { fields?: FieldProblem[] } | undefined)?.fields ?? []) : [];
  const data = stars.data && !stars.error ? stars.data : null;

  return (
    <div className="space-y-6">
      <PageTitle sub="Every star with a measurement you may see. Click a name for its measurements, combined values and plots.">Catalog</PageTitle>
      <Card>
        <CatalogSearch
          key={`${q}|${cone?.ra}|${cone?.dec}|${cone?.radius}`}
          q={q}
          cone={cone}
          problems={problems}
          onSearch={(text) => update({ q: text, ra: null, dec: null, l: null, b: null, radius: null })}
          onCone={(c) =>
            c.ra === '' && c.dec === '' && c.radius === ''
              ? update({ ra: null, dec: null, l: null, b: null, radius: null })
              : c.frame === 'galactic'
                ? update({ q: null, ra: null, dec: null, l: c.ra, b: c.dec, radius: c.radius, sort: null, order: null })
                : update({ q: null, l: null, b: null, ra: c.ra, dec: c.dec, radius: c.radius, sort: null, order: null })
          }
          onClear={() => update({ q: null, ra: null, dec: null, l: null, b: null, radius: null })}
        />
        <label className="mt-4 flex flex-wrap items-center gap-2 text-sm">
          <span className="text-muted">Only stars with a flagged measurement:</span>
          <select aria-label="Flag" value={flag} onChange={(e) => update({ flag: e.target.value || null })} className="rounded-md border border-line bg-white px-2 py-1 text-sm">
            <option value="">any (no flag filter)</option>
            {(plausibility.data?.flags ?? []).map((f) => (
              <option key={f.flag} value={f.flag} title={f.description}>
                {f.flag.replace(/_/g, ' ')}
              </option>
            ))}
            <option value="low_parallax_snr">low parallax snr</option>
            <option value="no_distance">no distance</option>
          </select>
          {flag && <span className="text-xs text-muted">{plausibility.data?.flags.find((f) => f.flag === flag)?.description}</span>}
        </label>
      </Card>
      {stars.error && problems.length === 0 && <Notice tone="bad">{stars.error.message}</Notice>}
      {stars.error && problems.length > 0 && <Notice tone="bad">The search was refused: {stars.error.message}.</Notice>}
      <Card title={cone && !stars.error ? (cone.frame === 'galactic' ? `Stars within ${cone.radius}° of l ${cone.ra}°, b ${cone.dec}°` : `Stars within ${cone.radius}° of RA ${cone.ra}, Dec ${cone.dec}`) : q ? `Stars matching “${q}”` : 'Stars'}>
        {stars.isPending && <p className="text-sm text-muted">Loading…</p>}
        {data && (
          <StarsTable
            stars={data.stars}
            total={data.total}
            sort={sort}
            order={order}
            cone={!!cone}
            pageSize={pageSize}
            page={page}
            fetching={stars.isFetching}
            onSort={(s, o) => update({ sort: s === 'id' ? null : s, order: s === 'id' ? null : o })}
            onPage={(p) => update({ page: String(p + 1) }, true)}
            onPageSize={(n) => update({ per: String(n) })}
          />
        )}
      </Card>
    </div>
  );
}
