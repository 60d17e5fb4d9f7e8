import { BrowserRouter, NavLink, Route, Routes } from 'react-router-dom';
import { ActivityList } from '../features/activity/components/activity-list.tsx';
import { ReportDetail } from '../features/reports/components/report-detail.tsx';
import { ReportHistory } from '../features/reports/components/report-history.tsx';

/** The client section under /app (React Router). Later features add their routes here. */
export default function ClientApp() {
  return (
    <BrowserRouter basename="/app">
      <div className="flex gap-8">
        <nav aria-label="Section" className="w-48 shrink-0 text-sm">
          <NavLink
            to="/activity"
            className={({ isActive }) => (isActive ? 'font-semibold text-ledger' : 'text-ink')}
          >
            My activity
          </NavLink>
          <NavLink
            to="/reports"
            className={({ isActive }) => `mt-1 block ${isActive ? 'font-semibold text-ledger' : 'text-ink'}`}
          >
            Reports
          </NavLink>
        </nav>
        <div className="flex-1">
          <Routes>
            <Route path="/" element={<ActivityPage />} />
            <Route path="/activity" element={<ActivityPage />} />
            <Route path="/reports" element={<ReportHistory />} />
            <Route path="/reports/:reportId" element={<ReportDetail />} />
            <Route path="*" element={<p>There is no page here. Choose one on the left.</p>} />
          </Routes>
        </div>
      </div>
    </BrowserRouter>
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
