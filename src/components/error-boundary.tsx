import { Component, type ReactNode } from 'react';

interface ErrorBoundaryProps {
  /** What this part of the page is, for the fallback: "The template editor", "The reports page". */
  what: string;
  children: ReactNode;
}

/**
 * Catches what a part of the page throws while it renders (a failed code download, a bug) so the
 * rest of the page keeps working and the person sees, instead of a blank area, what failed and a
 * way out. Refusals of the API are not thrown: each component shows those beside what they concern.
 */
export class ErrorBoundary extends Component<ErrorBoundaryProps, { caught: { error: unknown } | null }> {
  override state = { caught: null as { error: unknown } | null };

  // React itself logs the error with its component stack (createRoot's default onCaughtError).
  static getDerivedStateFromError(error: unknown) {
    return { caught: { error } };
  }

  override render() {
    const { caught } = this.state;
    return caught ? <ErrorFallback what={this.props.what} error={caught.error} /> : this.props.children;
  }
}

function ErrorFallback({ what, error }: { what: string; error: unknown }) {
  const reason = error instanceof Error ? error.message : String(error);
  return (
    <div role="alert" className="rounded-sm border border-alert/40 bg-alert/10 px-4 py-3 text-sm text-alert">
      <p className="font-semibold">{what} could not be shown.</p>
      {reason !== '' && <p className="mt-1">{reason}</p>}
      <p className="mt-1 text-ink">
        Reloading the page usually helps; changes not yet saved in this part of the page would be lost.
      </p>
      <button
        type="button"
        onClick={() => window.location.reload()}
        className="mt-2 rounded-sm border border-ledger bg-white px-3 py-1 font-semibold text-ledger"
      >
        Reload the page
      </button>
    </div>
  );
}
