import { TableRegion } from '../../../components/table-region.tsx';
import { useActivity } from '../api/get-activity.ts';

/** The caller's own audit events, newest first, as recorded in the audit trail. */
export function ActivityList({ limit }: { limit: number }) {
  const activity = useActivity({ limit });
  if (activity.isPending) return <p className="text-ink-muted">Loading your activity…</p>;
  if (activity.isError)
    return (
      <p role="alert" className="text-alert">
        Could not load your activity: {activity.error.message}
      </p>
    );
  if (activity.data.events.length === 0) return <p className="text-ink-muted">No recorded activity yet.</p>;
  return (
    <TableRegion label="Your activity">
      <table className="w-full text-sm">
        <thead>
          <tr className="border-b border-rule text-left">
            <th className="py-1 pr-4">When (UTC)</th>
            <th className="py-1 pr-4">What</th>
            <th className="py-1">Record</th>
          </tr>
        </thead>
        <tbody>
          {activity.data.events.map((event) => (
            <tr key={event.id} className="border-b border-rule/50">
              <td className="py-1 pr-4 tabular-nums">{event.occurredAt.replace('T', ' ').slice(0, 19)}</td>
              <td className="py-1 pr-4" title={event.action}>
                {event.summary}
              </td>
              <td className="py-1">
                {event.recordType ? `${event.recordType} ${event.recordId ?? ''}` : '—'}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </TableRegion>
  );
}
