"use client";

/**
 * The network text editor: CodeMirror 6 with Runnel's language, linter and
 * completion (src/editor). The view is created once per mount; a new `value`
 * from outside (another commit opened) replaces the text in the same view,
 * and callbacks are read at call time, so changing them never rebuilds it.
 */
import { Compartment, EditorState } from "@codemirror/state";
import { EditorView } from "@codemirror/view";
import { useEffect, useRef, useState } from "react";
import { readOnlyExtension, replaceText, runnelEditorExtensions } from "@/src/editor/setup";
import type { Diagnostic } from "@/src/lang/network";

export interface NetworkEditorProps {
  value: string;
  onChange?(text: string): void;
  /** Mod-s. */
  onSave?(): void;
  /** Mod-Enter. */
  onRun?(): void;
  readOnly?: boolean;
  /** The language's diagnostics after each lint of the current text. */
  onDiagnostics?(diagnostics: Diagnostic[]): void;
  className?: string;
}

/** Runs an optional handler; false when there is none, so the key keeps its usual meaning. */
function call(handler: (() => void) | undefined): boolean {
  if (!handler) return false;
  handler();
  return true;
}

export function NetworkEditor({
  value,
  onChange,
  onSave,
  onRun,
  readOnly = false,
  onDiagnostics,
  className,
}: NetworkEditorProps) {
  const host = useRef<HTMLDivElement>(null);
  const view = useRef<EditorView | null>(null);
  const [readOnlySetting] = useState(() => new Compartment());
  const callbacks = useRef({ onChange, onSave, onRun, onDiagnostics });
  const initial = useRef({ value, readOnly });
  /** The text last handed to onChange: when it comes back as `value` it is our own echo, not a new document. */
  const reported = useRef<string | null>(null);

  useEffect(() => {
    callbacks.current = { onChange, onSave, onRun, onDiagnostics };
  }, [onChange, onSave, onRun, onDiagnostics]);

  useEffect(() => {
    if (!host.current) return;
    const v = new EditorView({
      parent: host.current,
      state: EditorState.create({
        doc: initial.current.value,
        extensions: runnelEditorExtensions({
          onSave: () => call(callbacks.current.onSave),
          onRun: () => call(callbacks.current.onRun),
          onChange: (text) => {
            reported.current = text;
            callbacks.current.onChange?.(text);
          },
          lint: { onDiagnostics: (d) => callbacks.current.onDiagnostics?.(d) },
          readOnly: readOnlySetting,
          initiallyReadOnly: initial.current.readOnly,
        }),
      }),
    });
    view.current = v;
    return () => {
      view.current = null;
      v.destroy();
    };
  }, [readOnlySetting]);

  useEffect(() => {
    // An echo of an earlier keystroke must not undo the ones typed since.
    if (view.current && value !== reported.current) replaceText(view.current, value);
  }, [value]);

  useEffect(() => {
    view.current?.dispatch({ effects: readOnlySetting.reconfigure(readOnlyExtension(readOnly)) });
  }, [readOnly, readOnlySetting]);

  return (
    <div ref={host} className={className} data-slot="network-editor" data-readonly={readOnly ? "true" : undefined} />
  );
}

export default NetworkEditor;
