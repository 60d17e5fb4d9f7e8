import { useEffect } from 'react';

/**
 * Names the page in the browser tab and for screen readers (WCAG 2.4.2 Page Titled), in the form
 * the server's layout uses: "<page name> · Rateledger". `null` leaves the title as it is (a page
 * below sets its own).
 */
export function useDocumentTitle(name: string | null): void {
  useEffect(() => {
    if (name) document.title = `${name} · Rateledger`;
  }, [name]);
}
