import { problemText, type Problem } from './problems';

/** Under the grid: every edit the server did not take, each with its reason, until dismissed. */
export function UnsavedEdits({ problems, onDismiss }: { problems: [string, Problem][]; onDismiss: (key: string) => void }) {
  if (problems.length === 0) return null;
  return (
    <div role="alert" className="space-y-1 rounded-lg border border-bad/40 bg-bad/5 px-3 py-2 text-sm text-bad" data-testid="unsaved-edits">
      <div className="font-medium">
        {problems.length} edit{problems.length === 1 ? '' : 's'} not saved — the server kept its values:
      </div>
      <ul className="list-disc space-y-0.5 pl-5 text-xs">
        {problems.map(([k, p]) => (
          <li key={k}>
            {problemText(p)}{' '}
            <button type="button" className="underline" onClick={() => onDismiss(k)}>
              dismiss
            </button>
          </li>
        ))}
      </ul>
    </div>
  );
}
