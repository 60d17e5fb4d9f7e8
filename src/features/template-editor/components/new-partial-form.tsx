import { useState } from 'react';
import { PARTIAL_NAME_PATTERN } from '../draft.ts';

/** Adds an empty partial to the draft (used as {{> name}}); the name is checked as the server checks it. */
export function NewPartialForm({ existing, onAdd }: { existing: string[]; onAdd(name: string): void }) {
  const [open, setOpen] = useState(false);
  const [name, setName] = useState('');
  const [error, setError] = useState<string | null>(null);
  if (!open) {
    return (
      <button
        type="button"
        className="px-2 py-1.5 text-sm text-ledger underline"
        onClick={() => setOpen(true)}
      >
        + Partial
      </button>
    );
  }
  const add = () => {
    const trimmed = name.trim();
    if (!PARTIAL_NAME_PATTERN.test(trimmed))
      return setError('Use lower-case letters, digits and -, starting with a letter.');
    if (existing.includes(trimmed)) return setError(`There is already a partial "${trimmed}".`);
    onAdd(trimmed);
    setOpen(false);
    setName('');
    setError(null);
  };
  return (
    <span className="flex items-center gap-1 px-1 text-sm">
      <label className="sr-only" htmlFor="new-partial-name">
        Name of the new partial
      </label>
      <input
        id="new-partial-name"
        value={name}
        onChange={(event) => setName(event.target.value)}
        onKeyDown={(event) => {
          if (event.key === 'Enter') {
            event.preventDefault();
            add();
          }
        }}
        placeholder="partial-name"
        className="w-32 rounded-sm border border-rule px-1.5 py-0.5"
        aria-describedby={error ? 'new-partial-error' : undefined}
      />
      <button type="button" className="rounded-sm border border-ledger px-2 py-0.5 text-ledger" onClick={add}>
        Add
      </button>
      <button type="button" className="underline" onClick={() => setOpen(false)}>
        Cancel
      </button>
      {error && (
        <span id="new-partial-error" role="alert" className="text-xs text-alert">
          {error}
        </span>
      )}
    </span>
  );
}
