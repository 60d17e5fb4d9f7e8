/**
 * The links of a server-rendered error summary (`[data-error-summary]`, e.g. the sign form's)
 * move focus to the field they name, not only scroll to it: following a fragment link scrolls,
 * but leaves focus on the link, so a keyboard or screen-reader user would still be in the
 * summary (the GOV.UK Design System's error summary does the same). Without JavaScript the links
 * still scroll to the fields.
 */
export function focusFieldsFromErrorSummaries(root: Document): void {
  root.addEventListener('click', (event) => {
    const link = (event.target as Element | null)?.closest?.('[data-error-summary] a[href^="#"]');
    if (!link) return;
    const field = root.getElementById(decodeURIComponent(link.getAttribute('href')!.slice(1)));
    if (!(field instanceof HTMLElement)) return;
    event.preventDefault();
    field.scrollIntoView({ block: 'center' });
    field.focus();
  });
}
