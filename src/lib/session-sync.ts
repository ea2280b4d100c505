/**
 * Sessions across tabs (issue 18, item 5). The session cookie is shared by every tab of the
 * browser, so a sign-in or sign-out in one tab changes who the others act as. Each tab tells the
 * others through a BroadcastChannel (and a localStorage event where that is missing), so a tab
 * says what happened instead of failing with a confusing role message or an idle-expiry note.
 * Drafts of long texts (investigation notes, reasons) are kept in localStorage under the user's
 * id and removed at sign-out.
 */
import { useEffect, useState } from 'react';

export type SessionMessage =
  | { type: 'signed-in'; userId: number; username: string; fullName: string }
  | { type: 'signed-out'; userId: number | null };

const CHANNEL = 'drumline-session';
const STORAGE_KEY = 'drumline.session-event';
const DRAFT_PREFIX = 'drumline.draft.';

let channel: BroadcastChannel | null = null;
function getChannel(): BroadcastChannel | null {
  if (channel || typeof BroadcastChannel === 'undefined') return channel;
  channel = new BroadcastChannel(CHANNEL);
  return channel;
}

/** Tells the other tabs of this browser. */
export function announce(m: SessionMessage): void {
  const c = getChannel();
  if (c) c.postMessage(m);
  else
    try {
      localStorage.setItem(STORAGE_KEY, JSON.stringify({ ...m, at: Date.now() }));
    } catch {
      // storage full or blocked: the other tabs notice at their next request
    }
}

/** Listens to the other tabs; returns the unsubscribe function. */
export function onSessionMessage(fn: (m: SessionMessage) => void): () => void {
  const c = getChannel();
  if (c) {
    const h = (e: MessageEvent<SessionMessage>) => fn(e.data);
    c.addEventListener('message', h);
    return () => c.removeEventListener('message', h);
  }
  const h = (e: StorageEvent) => {
    if (e.key !== STORAGE_KEY || !e.newValue) return;
    try {
      fn(JSON.parse(e.newValue) as SessionMessage);
    } catch {
      // not ours
    }
  };
  window.addEventListener('storage', h);
  return () => window.removeEventListener('storage', h);
}

/** This tab's own sign-out in progress: the 401s it causes are no idle expiry. */
let signingOut = false;
export function markSigningOut(v: boolean): void {
  signingOut = v;
}
export function isSigningOut(): boolean {
  return signingOut;
}

/** A note kept across the reload that a switch of user causes (shown once by the app shell). */
const NOTICE_KEY = 'drumline.session-notice';
export function leaveNotice(text: string): void {
  try {
    sessionStorage.setItem(NOTICE_KEY, text);
  } catch {
    // nothing to keep
  }
}
export function takeNotice(): string | null {
  try {
    const t = sessionStorage.getItem(NOTICE_KEY);
    if (t) sessionStorage.removeItem(NOTICE_KEY);
    return t;
  } catch {
    return null;
  }
}

// ---------------------------------------------------------------------------------------------
// Drafts

/** The signed-in user whose drafts the forms keep (set by the app shell). */
let draftOwner: number | null = null;
export function setDraftOwner(userId: number | null): void {
  draftOwner = userId;
}

function draftKey(userId: number, key: string): string {
  return `${DRAFT_PREFIX}${userId}.${key}`;
}

/** Removes every draft (at sign-out: the next person at this terminal sees none). */
export function clearDrafts(): void {
  try {
    for (let i = localStorage.length - 1; i >= 0; i--) {
      const k = localStorage.key(i);
      if (k && k.startsWith(DRAFT_PREFIX)) localStorage.removeItem(k);
    }
  } catch {
    // storage blocked: nothing was kept
  }
}

/**
 * A text field's value kept as a local draft of this user: restored when the form opens again
 * (after a reload, an idle sign-out and sign-in), removed by clear() once the form is sent and
 * at sign-out. Without a signed-in user nothing is kept.
 */
export function useDraft(key: string): [string, (v: string) => void, () => void] {
  const userId = draftOwner;
  const k = userId === null ? null : draftKey(userId, key);
  const [value, setValue] = useState<string>(() => {
    if (!k) return '';
    try {
      return localStorage.getItem(k) ?? '';
    } catch {
      return '';
    }
  });
  useEffect(() => {
    if (!k) return;
    try {
      if (value) localStorage.setItem(k, value);
      else localStorage.removeItem(k);
    } catch {
      // storage full or blocked: the text stays in the form only
    }
  }, [k, value]);
  const clear = () => setValue('');
  return [value, setValue, clear];
}
