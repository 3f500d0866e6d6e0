/** Edits the server did not take: what the grid keeps of each and how it words them. */
import { FIELD_BY_KEY, type FieldKey } from '../../fields';
import type { StoredMeasurement } from '../../types';

/** An edit the server did not take, shown on its cell until dismissed or edited again. */
export type Problem =
  | { kind: 'refused'; line: number; field: FieldKey; typed: string; message: string }
  | { kind: 'stale'; line: number; field: FieldKey; typed: string; current: StoredMeasurement };

export const problemKey = (id: number, field: string) => `${id}:${field}`;

export function problemText(p: Problem): string {
  const where = `Line ${p.line}, ${FIELD_BY_KEY.get(p.field)?.header ?? p.field}`;
  if (p.kind === 'refused') return `${where}: “${p.typed === '' ? '(empty)' : p.typed}” was not saved — ${p.message}.`;
  const now = (p.current as Record<string, unknown>)[p.field];
  return `${where}: “${p.typed}” was not saved — someone else changed this measurement meanwhile (now version ${p.current.version}, ${p.field} = ${now === null || now === undefined ? 'empty' : String(now)}).`;
}
