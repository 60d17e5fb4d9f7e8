import { MappingWorkbench } from '../features/column-mapping/components/mapping-workbench.tsx';
import { useIslandDataset } from '../features/studies/components/use-island-dataset.ts';

export default function ColumnMappingIsland() {
  const { ref, data } = useIslandDataset();
  return (
    <div ref={ref}>
      {data?.uploadId && (
        <MappingWorkbench
          uploadId={data.uploadId}
          studyId={data.studyId ?? ''}
          valueUnit={data.valueUnit ?? '%'}
        />
      )}
    </div>
  );
}
