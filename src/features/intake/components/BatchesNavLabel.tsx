import { useMe } from '../../../lib/api/me';

/** Observers see only their own batches, so the list is called theirs. */
export function useBatchesLabel(): string {
  const { data: me } = useMe();
  return me?.role === 'observer' ? 'My batches' : 'Batches';
}

/** The navigation label of the batch list (it depends on the signed-in role). */
export function BatchesNavLabel() {
  return <>{useBatchesLabel()}</>;
}
