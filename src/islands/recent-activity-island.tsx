import { ActivityList } from '../features/activity/components/activity-list.tsx';

export default function RecentActivityIsland() {
  return <ActivityList limit={5} />;
}
