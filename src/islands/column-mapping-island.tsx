import { useMemo } from 'react';
import { parseAttributeChoices } from '../features/column-mapping/attribute-draft.ts';
import { MappingWorkbench } from '../features/column-mapping/components/mapping-workbench.tsx';
import { useIslandDataset } from '../features/studies/components/use-island-dataset.ts';

export default function ColumnMappingIsland() {
  const { ref, data } = useIslandDataset();
  const attributes = useMemo(() => parseAttributeChoices(data?.attributes), [data?.attributes]);
  return (
    <div ref={ref}>
      {data?.uploadId && (
        <MappingWorkbench
          uploadId={data.uploadId}
          studyId={data.studyId ?? ''}
          valueUnit={data.valueUnit ?? '%'}
          attributes={attributes}
        />
      )}
    </div>
  );
}
