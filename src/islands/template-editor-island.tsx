import { useIslandDataset } from '../features/studies/components/use-island-dataset.ts';
import { TemplateEditor } from '../features/template-editor/components/template-editor.tsx';

/** The report template editor on /admin/templates/:id/edit (`data-template-id`). */
export default function TemplateEditorIsland() {
  const { ref, data } = useIslandDataset();
  const templateId = Number(data?.templateId);
  return (
    <div ref={ref}>
      {Number.isInteger(templateId) && templateId > 0 && <TemplateEditor templateId={templateId} />}
    </div>
  );
}
