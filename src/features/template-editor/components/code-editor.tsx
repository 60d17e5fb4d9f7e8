import { EditorState } from '@codemirror/state';
import { EditorView } from '@codemirror/view';
import { basicSetup } from 'codemirror';
import { type RefObject, useEffect, useImperativeHandle, useRef } from 'react';
import { type EditorProblem, languageFor, problemExtensions, setProblems } from './editor-extensions.ts';

/** What the side panel uses to put a variable or helper where the cursor is. */
export interface CodeEditorHandle {
  insert(text: string): void;
}

interface CodeEditorProps {
  /** The part shown; each part keeps its own undo history while the editor is open. */
  part: string;
  text: string;
  problems: EditorProblem[];
  /** Changes when a whole version is loaded: every part's editor state starts again. */
  generation: number;
  label: string;
  onChange(part: string, text: string): void;
  handle: RefObject<CodeEditorHandle | null>;
}

/** One CodeMirror view; switching parts swaps its state, kept per part. */
export function CodeEditor({ part, text, problems, generation, label, onChange, handle }: CodeEditorProps) {
  const host = useRef<HTMLDivElement>(null);
  const view = useRef<EditorView | null>(null);
  const states = useRef(new Map<string, EditorState>());
  const shown = useRef<{ part: string; generation: number } | null>(null);
  const change = useRef(onChange);
  change.current = onChange;
  const latestProblems = useRef(problems);
  latestProblems.current = problems;

  const stateFor = (forPart: string, doc: string) =>
    EditorState.create({
      doc,
      extensions: [
        basicSetup,
        EditorView.lineWrapping,
        languageFor(forPart),
        problemExtensions,
        // tabindex 0 names the editable content as the focusable part of the scroll region (it is in
        // the tab order already, as a contenteditable): keyboard users reach and scroll the code.
        EditorView.contentAttributes.of({ 'aria-label': label, 'data-part': forPart, tabindex: '0' }),
        EditorView.updateListener.of((update) => {
          if (update.docChanged) change.current(forPart, update.state.doc.toString());
        }),
      ],
    });

  useEffect(() => {
    const editor = new EditorView({ parent: host.current! });
    view.current = editor;
    return () => {
      editor.destroy();
      view.current = null;
      shown.current = null;
    };
  }, []);

  // Show `part`: keep the state of the part that was shown, restore or create the new one.
  useEffect(() => {
    const editor = view.current;
    if (!editor) return;
    const previous = shown.current;
    if (previous && previous.generation !== generation) states.current.clear();
    else if (previous && previous.part === part) return;
    else if (previous) states.current.set(previous.part, editor.state);
    editor.setState(states.current.get(part) ?? stateFor(part, text));
    editor.dispatch({ effects: setProblems.of(latestProblems.current) });
    shown.current = { part, generation };
  });

  useEffect(() => {
    view.current?.dispatch({ effects: setProblems.of(problems) });
  }, [problems]);

  useImperativeHandle(handle, () => ({
    insert(snippet: string) {
      const editor = view.current;
      if (!editor) return;
      editor.dispatch(editor.state.replaceSelection(snippet));
      editor.focus();
    },
  }));

  return <div ref={host} className="h-[560px] overflow-hidden rounded-b-sm border border-rule bg-white" />;
}
