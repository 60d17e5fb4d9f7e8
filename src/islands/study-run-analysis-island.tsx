import { RunAnalysisButton } from '../features/studies/components/run-analysis-button.tsx';
import { useIslandDataset } from '../features/studies/components/use-island-dataset.ts';

export default function StudyRunAnalysisIsland() {
  const { ref, data } = useIslandDataset();
  return <div ref={ref}>{data?.datasetId && <RunAnalysisButton datasetId={data.datasetId} />}</div>;
}
