import { useId, useState } from 'react';
import type { TemplateEditorResponse } from '../../../../shared/api/templates.ts';
import { tabFromKey } from '../../../lib/tablist-keys.ts';

const TABS = [
  { key: 'variables', label: 'Variables' },
  { key: 'helpers', label: 'Helpers' },
] as const;

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
  const panelId = useId();
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
        {TABS.map(({ key, label }, index) => (
          <button
            key={key}
            id={`${panelId}-${key}-tab`}
            type="button"
            role="tab"
            aria-selected={tab === key}
            aria-controls={`${panelId}-panel`}
            tabIndex={tab === key ? 0 : -1}
            className={tabClass(tab === key)}
            onClick={() => setTab(key)}
            onKeyDown={(event) => {
              const next = tabFromKey(event, index, TABS.length);
              if (next !== null) setTab(TABS[next]!.key);
            }}
          >
            {label} ({key === 'variables' ? variables.length : helpers.length})
          </button>
        ))}
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
      <p className="px-3 text-xs text-ink-muted">Choose an entry to insert it at the cursor.</p>
      {/* The panel scrolls by itself, so it takes focus (tabIndex 0) for keyboard scrolling. */}
      <div
        id={`${panelId}-panel`}
        role="tabpanel"
        aria-labelledby={`${panelId}-${tab}-tab`}
        // biome-ignore lint/a11y/noNoninteractiveTabindex: a scrolling region must be reachable by keyboard (WCAG 2.1.1)
        tabIndex={0}
        className="mt-1 flex-1 overflow-y-auto px-2 pb-2"
      >
        <ul>
          {tab === 'variables'
            ? shownVariables.map((variable, index) => (
                <li
                  key={variable.path}
                  className="rounded-sm px-2 py-1.5 hover:bg-paper focus-within:bg-paper"
                >
                  <button
                    type="button"
                    onClick={() => onInsert(variable.insert)}
                    className="w-full text-left"
                    aria-describedby={`${panelId}-variable-${index}`}
                  >
                    <span className="sr-only">Insert</span>{' '}
                    <code className="text-xs font-semibold text-ledger">{variable.path}</code>
                  </button>
                  <span id={`${panelId}-variable-${index}`} className="block text-xs">
                    {variable.description}
                    <span className="block text-ink-muted">
                      e.g. {examples[variable.path] ?? variable.insert}
                    </span>
                  </span>
                </li>
              ))
            : shownHelpers.map((helper, index) => (
                <li key={helper.name} className="rounded-sm px-2 py-1.5 hover:bg-paper focus-within:bg-paper">
                  <button
                    type="button"
                    onClick={() => onInsert(helper.usage)}
                    className="w-full text-left"
                    aria-describedby={`${panelId}-helper-${index}`}
                  >
                    <span className="sr-only">Insert helper</span>{' '}
                    <code className="text-xs font-semibold text-ledger">{helper.name}</code>
                  </button>
                  <span id={`${panelId}-helper-${index}`} className="block text-xs">
                    {helper.description}
                    <code className="block text-ink-muted">{helper.usage}</code>
                  </span>
                </li>
              ))}
        </ul>
      </div>
    </aside>
  );
}
