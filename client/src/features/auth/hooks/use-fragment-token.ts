import { useEffect, useState } from 'react';

const tokenPattern = /(?:^#|&)token=([A-Za-z0-9_-]{43})(?:&|$)/;

/**
 * The one-time token from the page's fragment (`#token=…`). After the first render the fragment
 * is removed from the address bar and history, so the token is not left behind on screen.
 */
export function useFragmentToken(): string | null {
  const [token] = useState<string | null>(() => tokenPattern.exec(window.location.hash)?.[1] ?? null);
  useEffect(() => {
    if (tokenPattern.test(window.location.hash)) window.history.replaceState(window.history.state, '', `${window.location.pathname}${window.location.search}`);
  }, []);
  return token;
}
