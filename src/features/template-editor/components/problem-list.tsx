import { partLabel, type TemplateProblemItem } from '../../../../shared/api/templates.ts';

/** The template's problems, each with its part, line and column; a click shows that part. */
export function ProblemList({
  problems,
  heading,
  onShow,
}: {
  problems: TemplateProblemItem[];
  heading: string;
  onShow(part: string): void;
}) {
  if (problems.length === 0) return null;
  return (
    <section
      role="alert"
      aria-label={heading}
      className="rounded-sm border border-alert/40 bg-alert/5 p-3 text-sm"
    >
      <h3 className="font-semibold text-alert">{heading}</h3>
      <ul className="mt-1 space-y-1">
        {problems.map((problem) => (
          <li key={`${problem.part}:${problem.line}:${problem.column}:${problem.message}`}>
            <button
              type="button"
              className="text-left underline-offset-2 hover:underline"
              onClick={() => onShow(problem.part)}
            >
              <span className="font-semibold">
                {partLabel(problem.part)}
                {problem.line === null ? '' : `, line ${problem.line}, column ${problem.column}`}:
              </span>{' '}
              {problem.message}
            </button>
          </li>
        ))}
      </ul>
    </section>
  );
}
