import { UploadForm } from '../features/studies/components/upload-form.tsx';
import { useIslandDataset } from '../features/studies/components/use-island-dataset.ts';

export default function StudyUploadIsland() {
  const { ref, data } = useIslandDataset();
  return (
    <div ref={ref}>{data && <UploadForm studyId={data.studyId ?? ''} limit={data.uploadLimit ?? ''} />}</div>
  );
}
