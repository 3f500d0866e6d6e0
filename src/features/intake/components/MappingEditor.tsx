import { useMemo, useState, type FormEvent } from 'react';
import { Button, Card, Notice, Select } from '../../../components/ui/primitives';
import { ApiError } from '../../../lib/apiClient';
import { useSubmitMapping } from '../api/submitMapping';
import type { Batch, ColumnMapping, FieldProblem, IntakeColumn, MappingProposal } from '../types';
import { RequiredRule } from './ColumnGuideTable';

const PREVIEW_ROWS = 8;

interface Props {
  batch: Batch;
  proposal: MappingProposal;
  columns: IntakeColumn[];
}

type Group = 'choose' | 'matched' | 'unmatched';
const GROUP_TITLE: Record<Group, string> = {
  choose: 'Several headers fit — choose one',
  matched: 'Matched from the headers',
  unmatched: 'Not found in this file',
};

/** For each Starveil column, pick the file's header that holds it; preview the result; confirm. */
export function MappingEditor({ batch, proposal, columns }: Props) {
  const submit = useSubmitMapping();
  const [choice, setChoice] = useState<ColumnMapping>(() => ({ ...proposal.mapping }));
  const [saveForInstrument, setSaveForInstrument] = useState(false);
  const [showUnmatched, setShowUnmatched] = useState(false);

  // Groups come from the proposal, not from the live choice, so rows stay put while editing.
  const groups = useMemo(() => {
    const known = new Set(columns.map((c) => c.name));
    const extra = [...Object.keys(proposal.mapping), ...Object.keys(proposal.ambiguous)].filter((n) => !known.has(n));
    const all: IntakeColumn[] = [...columns, ...[...new Set(extra)].map((name) => ({ name, unit: '', required: '', description: '', synonyms: [] }))];
    const by: Record<Group, IntakeColumn[]> = { choose: [], matched: [], unmatched: [] };
    for (const c of all) {
      if (proposal.ambiguous[c.name]?.length) by.choose.push(c);
      else if (proposal.mapping[c.name]) by.matched.push(c);
      else by.unmatched.push(c);
    }
    return by;
  }, [columns, proposal]);

  const headerIndex = useMemo(() => new Map(proposal.headers.map((h, i) => [h, i])), [proposal.headers]);

  /** header → the canonical columns it is currently chosen for */
  const usedBy = useMemo(() => {
    const m = new Map<string, string[]>();
    for (const [canonical, header] of Object.entries(choice)) {
      if (!header) continue;
      m.set(header, [...(m.get(header) ?? []), canonical]);
    }
    return m;
  }, [choice]);

  const unread = proposal.headers.filter((h) => !usedBy.has(h));
  const unresolved = groups.choose.filter((c) => !choice[c.name]).map((c) => c.name);

  const samples = (header: string | undefined) => {
    if (!header) return '';
    const i = headerIndex.get(header);
    if (i === undefined) return '';
    return proposal.preview
      .map((r) => r[i])
      .filter((v) => v !== undefined && v !== '')
      .slice(0, 3)
      .join(' · ');
  };

  const problems: FieldProblem[] = submit.error instanceof ApiError ? ((submit.error.details as { fields?: FieldProblem[] } | undefined)?.fields ?? []) : [];
  // the server names a mapping problem "mapping.<column>"; a missing group is "mapping" alone
  const problemFor = (name: string) => problems.filter((p) => p.field === name || p.field === `mapping.${name}`);

  const onSubmit = (e: FormEvent) => {
    e.preventDefault();
    const mapping: ColumnMapping = {};
    for (const [k, v] of Object.entries(choice)) if (v) mapping[k] = v;
    submit.mutate({ batchId: batch.id, mapping, saveForInstrument: saveForInstrument && !!batch.instrument });
  };

  return (
    <Card title="Match the file's columns">
      <form onSubmit={onSubmit} className="space-y-6" aria-label="Column mapping">
        <p className="text-sm text-ink">
          Starveil read {proposal.headers.length} headers from <b>{batch.filename}</b> but could not match every column on its own. For each
          Starveil column below, choose the header in your file that holds it, or leave it empty when the file does not have it. The
          sample values come from the first rows of the file.
        </p>

        {(proposal.missing.length > 0 || unresolved.length > 0) && (
          <div data-testid="mapping-missing" className="space-y-2 rounded-lg border border-amber/60 bg-amber/10 px-4 py-3 text-sm text-ink">
            {unresolved.length > 0 && (
              <div>
                <div className="font-medium text-amber-deep">Choose before confirming</div>
                <ul className="mt-1 list-disc space-y-0.5 pl-5">
                  {unresolved.map((n) => (
                    <li key={n}>
                      <code>{n}</code>: several headers could hold it ({proposal.ambiguous[n].join(', ')}).
                    </li>
                  ))}
                </ul>
              </div>
            )}
            {proposal.missing.length > 0 && (
              <div>
                <div className="font-medium text-amber-deep">Not found when the file was read</div>
                <ul className="mt-1 list-disc space-y-0.5 pl-5">
                  {proposal.missing.map((m) => (
                    <li key={m}>{m}</li>
                  ))}
                </ul>
                <div className="mt-1 text-xs text-muted">Your choices below are checked again when you confirm.</div>
              </div>
            )}
          </div>
        )}

        <div className="overflow-x-auto">
          <table className="w-full text-left text-sm">
            <thead className="border-b border-line text-xs uppercase tracking-wide text-muted">
              <tr>
                <th className="py-2 pr-4">Starveil column</th>
                <th className="pr-4">Needed</th>
                <th className="pr-4">Header in your file</th>
                <th>First values</th>
              </tr>
            </thead>
            {(['choose', 'matched', 'unmatched'] as const).map((g) =>
              groups[g].length === 0 ? null : (
                <tbody key={g}>
                  <tr>
                    <th colSpan={4} className="pt-4 pb-1 text-xs font-semibold uppercase tracking-wide text-night">
                      {GROUP_TITLE[g]}
                      {g === 'unmatched' && (
                        <button
                          type="button"
                          aria-expanded={showUnmatched}
                          onClick={() => setShowUnmatched(!showUnmatched)}
                          className="ml-3 rounded px-1.5 py-0.5 text-xs font-medium normal-case tracking-normal text-veil underline underline-offset-2 hover:bg-veil-soft"
                        >
                          {showUnmatched ? 'hide' : `show all ${groups.unmatched.length}`}
                        </button>
                      )}
                    </th>
                  </tr>
                  {g === 'unmatched' && !showUnmatched && (
                    <tr>
                      <td colSpan={4} className="pb-2 text-xs text-muted">
                        {groups.unmatched.map((c) => c.name).join(', ')} — open the list to match one of them by hand.
                      </td>
                    </tr>
                  )}
                  {groups[g].filter((c) => g !== 'unmatched' || showUnmatched || !!choice[c.name] || problemFor(c.name).length > 0).map((c) => {
                    const header = choice[c.name] ?? '';
                    const candidates = proposal.ambiguous[c.name] ?? [];
                    const shared = header ? (usedBy.get(header) ?? []).filter((n) => n !== c.name) : [];
                    const rowProblems = problemFor(c.name);
                    const open = candidates.length > 0 && !header;
                    return (
                      <tr
                        key={c.name}
                        data-testid={`map-row-${c.name}`}
                        data-ambiguous={candidates.length > 0 || undefined}
                        className={`border-b border-line/60 align-top ${candidates.length ? 'bg-amber/10' : ''} ${rowProblems.length ? 'bg-bad/5' : ''}`}
                      >
                        <td className={`py-2 pr-4 ${candidates.length ? 'border-l-4 border-amber pl-3' : 'pl-4'}`}>
                          <code className="font-semibold text-night">{c.name}</code>
                          {c.unit && <span className="ml-1.5 text-xs text-muted">[{c.unit}]</span>}
                          {c.description && <div className="mt-0.5 max-w-xs text-xs text-muted">{c.description}</div>}
                        </td>
                        <td className="max-w-[14rem] py-2 pr-4 text-xs">
                          <RequiredRule rule={c.required} />
                        </td>
                        <td className="py-2 pr-4">
                          <Select
                            aria-label={`Header for ${c.name}`}
                            value={header}
                            onChange={(e) => {
                              setChoice({ ...choice, [c.name]: e.target.value });
                              if (submit.error) submit.reset(); // the old answer no longer describes this choice
                            }}
                            className={`min-w-[11rem] ${open ? 'border-amber ring-2 ring-amber/40' : ''}`}
                          >
                            <option value="">{open ? 'Choose…' : '— not in this file —'}</option>
                            {candidates.length > 0 && (
                              <optgroup label="Could be">
                                {candidates.map((h) => (
                                  <option key={h} value={h}>
                                    {h}
                                  </option>
                                ))}
                              </optgroup>
                            )}
                            <optgroup label={candidates.length ? 'Other headers' : 'Headers in the file'}>
                              {proposal.headers
                                .filter((h) => !candidates.includes(h))
                                .map((h) => (
                                  <option key={h} value={h}>
                                    {h}
                                  </option>
                                ))}
                            </optgroup>
                          </Select>
                          {candidates.length > 0 && (
                            <div className="mt-1 text-xs text-amber-deep">
                              Could be {candidates.map((h, i) => (
                                <span key={h}>
                                  {i > 0 && (i === candidates.length - 1 ? ' or ' : ', ')}
                                  <code>{h}</code>
                                </span>
                              ))}
                            </div>
                          )}
                          {shared.length > 0 && (
                            <div className="mt-1 text-xs text-warn">
                              <code>{header}</code> is also chosen for {shared.join(', ')}.
                            </div>
                          )}
                          {rowProblems.map((p) => (
                            <div key={p.message} role="alert" className="mt-1 text-xs text-bad">
                              {p.message}
                            </div>
                          ))}
                        </td>
                        <td className="num py-2 font-mono text-xs text-ink">{samples(header) || <span className="text-muted">—</span>}</td>
                      </tr>
                    );
                  })}
                </tbody>
              ),
            )}
          </table>
        </div>

        <div>
          <h3 className="mb-2 text-sm font-semibold text-night">The first rows, as Starveil will read them</h3>
          <PreviewTable headers={proposal.headers} rows={proposal.preview.slice(0, PREVIEW_ROWS)} usedBy={usedBy} />
          {unread.length > 0 && (
            <p className="mt-2 text-xs text-muted">
              Not read (kept in the raw file only): {unread.map((h) => <code key={h} className="mr-1.5">{h}</code>)}
            </p>
          )}
        </div>

        {submit.error && (
          <Notice tone="bad">
            <span data-testid="mapping-error">{submit.error.message}</span>
            {/* problems tied to one column are also shown beside its select */}
            {problems.some((p) => p.field.startsWith('mapping.')) && (
              <ul className="mt-1 list-disc pl-5">
                {problems
                  .filter((p) => p.field.startsWith('mapping.'))
                  .map((p) => (
                    <li key={p.field + p.message}>
                      <b className="font-mono">{p.field.slice('mapping.'.length)}</b>: {p.message}
                    </li>
                  ))}
              </ul>
            )}
          </Notice>
        )}

        <div className="flex flex-wrap items-center justify-between gap-4 border-t border-line pt-4">
          <label className={`flex items-center gap-2 text-sm ${batch.instrument ? 'text-ink' : 'text-muted'}`}>
            <input
              type="checkbox"
              className="h-4 w-4 accent-night"
              checked={saveForInstrument && !!batch.instrument}
              disabled={!batch.instrument}
              onChange={(e) => setSaveForInstrument(e.target.checked)}
            />
            {batch.instrument
              ? `Save this mapping for ${batch.instrument}, so its next files are matched without asking`
              : 'Save this mapping for the instrument (choose an instrument when uploading to use this)'}
          </label>
          <Button type="submit" disabled={submit.isPending}>
            {submit.isPending ? 'Checking…' : 'Confirm mapping and check rows'}
          </Button>
        </div>
      </form>
    </Card>
  );
}

/** The file's first rows under its own headers, with the Starveil column each header feeds above it. */
function PreviewTable({ headers, rows, usedBy }: { headers: string[]; rows: string[][]; usedBy: Map<string, string[]> }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-line">
      <table className="min-w-full text-left text-xs" aria-label="Preview of the first rows">
        <thead>
          <tr className="bg-night text-veil-soft">
            {headers.map((h) => {
              const names = usedBy.get(h);
              return (
                <th key={h} data-testid={`preview-canonical-${h}`} className="whitespace-nowrap px-2.5 py-1.5 font-mono font-medium">
                  {names ? <span className="text-amber">{names.join(' + ')}</span> : <span className="opacity-50">not read</span>}
                </th>
              );
            })}
          </tr>
          <tr className="border-b border-line bg-veil-soft text-night">
            {headers.map((h) => (
              <th key={h} className={`whitespace-nowrap px-2.5 py-1.5 font-mono font-semibold ${usedBy.has(h) ? '' : 'text-muted'}`}>
                {h}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {rows.map((r, i) => (
            <tr key={i} className="border-b border-line/60 last:border-0">
              {headers.map((h, j) => (
                <td key={h} className={`num whitespace-nowrap px-2.5 py-1 font-mono ${usedBy.has(h) ? 'text-ink' : 'text-muted'}`}>
                  {r[j] ?? ''}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}
