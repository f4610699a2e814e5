// The token dialog: asks once, keeps the token for this tab (tokenStore), and runs actions that
// need it, asking again after a 401.

import { ApiError } from '../api.js';
import { byId } from '../dom.js';
import { tokenStore } from '../tokenStore.js';

export interface TokenDialog {
  /** Opens the dialog; `then` runs once a token was saved. */
  ask(then?: () => void): void;
  /** Runs an action that needs the token; asks for it first when none is kept, again after a 401. */
  withToken(action: () => Promise<void>, onRefused: (text: string) => void): void;
}

export function mountTokenDialog(): TokenDialog {
  const dialog = byId<HTMLDialogElement>('token-dialog');
  const input = byId<HTMLInputElement>('token-input');
  let afterToken: (() => void) | undefined;
  const ask = (then?: () => void): void => {
    afterToken = then;
    input.value = '';
    if (!dialog.open) dialog.showModal();
    input.focus();
  };
  byId('token-button').addEventListener('click', () => ask());
  byId('token-form').addEventListener('submit', () => {
    const t = input.value.trim();
    if (t) tokenStore.set(t);
    const next = afterToken;
    afterToken = undefined;
    if (t && next) setTimeout(next, 0);
  });
  byId('token-forget').addEventListener('click', () => {
    tokenStore.clear();
    afterToken = undefined;
    dialog.close();
  });
  byId('token-cancel').addEventListener('click', () => {
    afterToken = undefined;
    dialog.close();
  });
  const withToken = (action: () => Promise<void>, onRefused: (text: string) => void): void => {
    if (!tokenStore.get()) {
      ask(() => withToken(action, onRefused));
      return;
    }
    action().catch((err: unknown) => {
      if (err instanceof ApiError && err.status === 401) {
        tokenStore.clear();
        onRefused('the token was refused; enter it again');
        ask(() => withToken(action, onRefused));
      } else onRefused((err as Error).message);
    });
  };
  return { ask, withToken };
}
