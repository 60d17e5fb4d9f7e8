import { type ReactNode, useRef } from 'react';
import { BrowserRouter, NavLink, Route, Routes, useLocation } from 'react-router';
import { ErrorBoundary } from '../components/error-boundary.tsx';
import { ActivityList } from '../features/activity/components/activity-list.tsx';
import { ReportDetail } from '../features/reports/components/report-detail.tsx';
import { ReportHistory } from '../features/reports/components/report-history.tsx';
import { useDocumentTitle } from '../lib/document-title.ts';
import { useFocusHeadingOnRouteChange } from './focus-on-route-change.ts';

/**
 * The routes of the section; each is shown in its own error boundary, so a page that fails names
 * itself in the fallback while the navigation keeps working. Later features add their routes here.
 */
const ROUTES: { path: string; what: string; title: string | null; page: ReactNode }[] = [
  { path: '/', what: 'Your activity', title: 'My activity', page: <ActivityPage /> },
  { path: '/activity', what: 'Your activity', title: 'My activity', page: <ActivityPage /> },
  { path: '/reports', what: 'The reports', title: 'Reports', page: <ReportHistory /> },
  // The report page names itself after the report it shows.
  { path: '/reports/:reportId', what: 'The report', title: null, page: <ReportDetail /> },
  {
    path: '*',
    what: 'This page',
    title: 'No such page',
    // Not "on the left": when narrow, the section menu sits above the page (WCAG 1.3.3).
    page: <p>There is no page here. Choose one in the section menu (My activity, Reports).</p>,
  },
];

/** The client section under /app (React Router). */
export default function ClientApp() {
  return (
    <BrowserRouter basename="/app">
      <Section />
    </BrowserRouter>
  );
}

function Section() {
  const page = useRef<HTMLDivElement>(null);
  useFocusHeadingOnRouteChange(page);
  return (
    <>
      {/* The side menu sits above the page when narrow (reflow at 320 px and at 200 % text). */}
      <div className="flex flex-col gap-4 md:flex-row md:gap-8">
        <nav
          aria-label="Section"
          className="flex flex-wrap gap-x-5 gap-y-1 text-sm md:block md:w-48 md:shrink-0"
        >
          <NavLink
            to="/activity"
            className={({ isActive }) => (isActive ? 'font-semibold text-ledger' : 'text-ink')}
          >
            My activity
          </NavLink>
          <NavLink
            to="/reports"
            className={({ isActive }) =>
              `md:mt-1 md:block ${isActive ? 'font-semibold text-ledger' : 'text-ink'}`
            }
          >
            Reports
          </NavLink>
        </nav>
        <div ref={page} className="min-w-0 flex-1">
          <Routes>
            {ROUTES.map(({ path, what, title, page }) => (
              <Route
                key={path}
                path={path}
                element={
                  <RouteBoundary what={what} title={title}>
                    {page}
                  </RouteBoundary>
                }
              />
            ))}
          </Routes>
        </div>
      </div>
    </>
  );
}

/**
 * Starts the boundary afresh on every address, so opening another report clears a failure, and
 * titles the page (each /app page names itself: "Reports · Rateledger").
 */
function RouteBoundary({
  what,
  title,
  children,
}: {
  what: string;
  title: string | null;
  children: ReactNode;
}) {
  const { pathname } = useLocation();
  useDocumentTitle(title);
  return (
    <ErrorBoundary key={pathname} what={what}>
      {children}
    </ErrorBoundary>
  );
}

function ActivityPage() {
  return (
    <section>
      <h1 className="font-serif text-2xl">My activity</h1>
      <p className="mt-1 text-sm text-ink-muted">
        What the audit trail holds about your own actions, newest first.
      </p>
      <div className="mt-4 rounded-md border border-rule bg-white p-4">
        <ActivityList limit={50} />
      </div>
    </section>
  );
}
