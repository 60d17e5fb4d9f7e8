export interface ListedProblem {
  where?: string | undefined;
  message: string;
  text: string;
}

/** Every problem with its cell reference, in sheet order, so a file can be fixed in one pass. */
export function ProblemList({
  heading,
  problems,
  tone = 'alert',
}: {
  heading: string;
  problems: ListedProblem[];
  tone?: 'alert' | 'note';
}) {
  const colours =
    tone === 'alert' ? 'border-alert/40 bg-alert/10 text-alert' : 'border-rule bg-paper text-ink';
  return (
    <div
      role={tone === 'alert' ? 'alert' : 'status'}
      className={`rounded-sm border px-4 py-3 text-sm ${colours}`}
    >
      <p className="font-semibold">{heading}</p>
      {problems.length > 0 && (
        <ul className="mt-2 max-h-72 list-none space-y-1 overflow-auto">
          {problems.map((problem) => (
            <li key={problem.text}>
              {problem.where ? (
                <span className="mr-1 font-mono text-xs font-semibold">{problem.where}:</span>
              ) : null}
              <span>{problem.message}</span>
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
