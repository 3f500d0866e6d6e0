import { Link, useNavigate, useParams } from 'react-router-dom';
import { Notice } from '../../../components/ui/primitives';
import { useMe } from '../../../lib/api/me';
import { useStar } from '../api/star';
import { StarDetailView } from '../components/StarDetailView';

export function StarPage() {
  const { id } = useParams();
  const n = Number(id);
  const valid = Number.isInteger(n) && n > 0;
  const star = useStar(valid ? n : 0);
  const { data: me } = useMe();
  const navigate = useNavigate();
  return (
    <div className="space-y-4">
      <Link
        to="/catalog"
        onClick={(e) => {
          if (window.history.length > 1) {
            e.preventDefault();
            navigate(-1);
          }
        }}
        className="text-sm text-veil underline-offset-2 hover:underline"
      >
        ← Catalog
      </Link>
      {!valid && <Notice tone="bad">“{id}” is not a star number.</Notice>}
      {valid && star.isPending && <p className="text-sm text-muted">Loading…</p>}
      {valid && star.error && <Notice tone="bad">{star.error.message}</Notice>}
      {valid && star.data && <StarDetailView data={star.data} me={me} />}
    </div>
  );
}
