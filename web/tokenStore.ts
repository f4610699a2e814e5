// The bearer token for acknowledging alerts and steering replays: typed once by the user, kept
// for this browser tab only (sessionStorage), never written into the page or a URL we show.

const KEY = 'helicord.token';

export const tokenStore = {
  get(): string | undefined {
    try {
      return sessionStorage.getItem(KEY) ?? undefined;
    } catch {
      return undefined;
    }
  },
  set(token: string): void {
    try {
      sessionStorage.setItem(KEY, token);
    } catch {
      /* storage refused (private mode): the token lives until reload only */
    }
  },
  clear(): void {
    try {
      sessionStorage.removeItem(KEY);
    } catch {
      /* nothing stored */
    }
  },
};
