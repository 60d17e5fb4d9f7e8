import { useId, useState } from 'react';
import type { TemplateEditorResponse } from '../../../../shared/api/templates.ts';

interface ReferencePanelProps {
  variables: TemplateEditorResponse['variables'];
  helpers: TemplateEditorResponse['helpers'];
  /** Each variable's value in the sample analysis of the preview. */
  examples: Record<string, string>;
  onInsert(text: string): void;
}

/** Every variable and helper a template may use, with what it holds, an example, and a click to insert. */
export function ReferencePanel({ variables, helpers, examples, onInsert }: ReferencePanelProps) {
  const [filter, setFilter] = useState('');
  const [tab, setTab] = useState<'variables' | 'helpers'>('variables');
  const searchId = useId();
  const needle = filter.trim().toLowerCase();
  const shownVariables = variables.filter(
    (variable) => !needle || `${variable.path} ${variable.description}`.toLowerCase().includes(needle),
  );
  const shownHelpers = helpers.filter(
    (helper) => !needle || `${helper.name} ${helper.description}`.toLowerCase().includes(needle),
  );
  const tabClass = (active: boolean) =>
    `flex-1 px-2 py-1.5 text-sm font-semibold ${active ? 'border-b-2 border-ledger text-ledger' : 'text-ink-muted'}`;

  return (
    <aside
      aria-label="Variables and helpers"
      className="flex h-full flex-col rounded-sm border border-rule bg-white"
    >
      <div role="tablist" aria-label="Reference" className="flex border-b border-rule">
        <button
          type="button"
          role="tab"
          aria-selected={tab === 'variables'}
          className={tabClass(tab === 'variables')}
          onClick={() => setTab('variables')}
        >
          Variables ({variables.length})
        </button>
        <button
          type="button"
          role="tab"
          aria-selected={tab === 'helpers'}
          className={tabClass(tab === 'helpers')}
          onClick={() => setTab('helpers')}
        >
          Helpers ({helpers.length})
        </button>
      </div>
      <label htmlFor={searchId} className="sr-only">
        Find a variable or helper
      </label>
      <input
        id={searchId}
        type="search"
        value={filter}
        onChange={(event) => setFilter(event.target.value)}
        placeholder="Find…"
        className="m-2 rounded-sm border border-rule px-2 py-1 text-sm"
      />
      <p className="px-3 text-xs text-ink-muted">Click an entry to insert it at the cursor.</p>
      <ul className="mt-1 flex-1 overflow-y-auto px-2 pb-2" role="tabpanel" aria-label={tab}>
        {tab === 'variables'
          ? shownVariables.map((variable) => (
              <li key={variable.path}>
                <button
                  type="button"
                  onClick={() => onInsert(variable.insert)}
                  className="w-full rounded-sm px-2 py-1.5 text-left hover:bg-paper focus:bg-paper"
                  aria-label={`Insert ${variable.path}`}
                >
                  <code className="text-xs font-semibold text-ledger">{variable.path}</code>
                  <span className="block text-xs">{variable.description}</span>
                  <span className="block text-xs text-ink-muted">
                    e.g. {examples[variable.path] ?? variable.insert}
                  </span>
                </button>
              </li>
            ))
          : shownHelpers.map((helper) => (
              <li key={helper.name}>
                <button
                  type="button"
                  onClick={() => onInsert(helper.usage)}
                  className="w-full rounded-sm px-2 py-1.5 text-left hover:bg-paper focus:bg-paper"
                  aria-label={`Insert helper ${helper.name}`}
                >
                  <code className="text-xs font-semibold text-ledger">{helper.name}</code>
                  <span className="block text-xs">{helper.description}</span>
                  <code className="block text-xs text-ink-muted">{helper.usage}</code>
                </button>
              </li>
            ))}
      </ul>
    </aside>
  );
}
