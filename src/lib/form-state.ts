/** Form state kept as one object of texts (what the controls show), bound to controls by key. */
import type { ChangeEvent } from 'react';

type Control = HTMLInputElement | HTMLSelectElement | HTMLTextAreaElement;

/**
 * `const bind = bindTexts(state, setState)`, then `<Input {...bind('name')} />`: the control shows
 * `state.name` and every edit replaces the object with that one text changed.
 */
export function bindTexts<T extends Record<string, string>>(state: T, setState: (next: T) => void) {
  return <K extends keyof T & string>(key: K) => ({
    value: state[key],
    onChange: (e: ChangeEvent<Control>) => setState({ ...state, [key]: e.target.value }),
  });
}

/** The first message of a failed schema check for each top-level field, by the field's name. */
export function fieldErrors(issues: readonly { path: readonly PropertyKey[]; message: string }[]) {
  const out: Record<string, string> = {};
  for (const i of issues) out[String(i.path[0])] ??= i.message;
  return out;
}
