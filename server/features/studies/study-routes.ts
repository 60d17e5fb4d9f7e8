import { type Request, Router } from 'express';
import {
  fieldErrors,
  recordIdSchema,
  STUDY_DIRECTIONS,
  studyFormSchema,
} from '../../../shared/api/studies.ts';
import { formatBytes, UPLOAD_SIZE_LIMIT_BYTES } from '../../../shared/api/uploads.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { createStudy, findStudy, listStudies, type Study, studyOverview, updateStudy } from './studies.ts';
import { declarationSelects, declarationSummary } from './study-declaration-fields.ts';
import { retiredRows } from './study-retired-rows.ts';
import { listStudyVersions, reasonRefusal } from './study-versions.ts';

/** Who may read studies: every duty of the product. Only analysts create and change them. */
const READERS = ['analyst', 'reviewer', 'admin'] as const;

type FormValues = Record<string, string>;

function formValuesOf(study: Study): FormValues {
  const number = (value: number | null) => (value === null ? '' : String(value));
  return {
    title: study.title,
    product: study.product,
    attribute: study.attribute,
    unit: study.unit,
    direction: study.direction,
    lowerLimit: number(study.lowerLimit),
    upperLimit: number(study.upperLimit),
    storageTemperatureC: number(study.storageTemperatureC),
    storageHumidityPercent: number(study.storageHumidityPercent),
    storageCategory: study.storageCategory,
    intermediateTemperatureC: number(study.intermediateTemperatureC),
    acceleratedTemperatureC: number(study.acceleratedTemperatureC),
    acceleratedChange: study.acceleratedChange,
    intermediateChange: study.intermediateChange,
    littleChange: study.littleChange,
    supportingData: study.supportingData,
    declarationBasis: study.declarationBasis,
    workingOrder: study.workingOrder === null ? '' : String(study.workingOrder),
    workingOrderReason: study.workingOrderReason,
    batches: study.batches.join('\n'),
    notes: study.notes,
  };
}

function postedValues(req: Request): FormValues {
  const body = (req.body ?? {}) as Record<string, unknown>;
  return Object.fromEntries(
    Object.entries(body).map(([key, value]) => [key, typeof value === 'string' ? value : '']),
  );
}

interface FieldSpec {
  name: string;
  label: string;
  hint: string;
  wide?: boolean;
  decimal?: boolean;
}

const FIELD_GROUPS: Record<'study' | 'criterion' | 'storage' | 'roles', FieldSpec[]> = {
  study: [
    {
      name: 'title',
      label: 'Title',
      hint: 'e.g. Long-term and accelerated stability, 2025 campaign',
      wide: true,
    },
    { name: 'product', label: 'Product', hint: 'Product name and strength' },
    { name: 'attribute', label: 'Attribute measured', hint: 'e.g. Assay, Impurity B' },
    { name: 'unit', label: 'Unit', hint: 'e.g. % of label claim, % area, mg/mL' },
  ],
  criterion: [
    { name: 'lowerLimit', label: 'Lower limit', hint: 'In the unit above; blank for none', decimal: true },
    { name: 'upperLimit', label: 'Upper limit', hint: 'In the unit above; blank for none', decimal: true },
  ],
  storage: [
    { name: 'storageTemperatureC', label: 'Temperature (°C)', hint: 'e.g. 25', decimal: true },
    {
      name: 'storageHumidityPercent',
      label: 'Relative humidity (%)',
      hint: 'e.g. 60; blank when not controlled',
      decimal: true,
    },
  ],
  roles: [
    {
      name: 'intermediateTemperatureC',
      label: 'Intermediate condition (°C)',
      hint: 'e.g. 30; blank when the study has none',
      decimal: true,
    },
    {
      name: 'acceleratedTemperatureC',
      label: 'Accelerated condition (°C)',
      hint: 'e.g. 40 for room temperature, 25 for a refrigerated product',
      decimal: true,
    },
  ],
};

function formLocals(values: FormValues, errors: Record<string, string>, action: string, study?: Study) {
  const fill = (specs: FieldSpec[]) =>
    specs.map((spec) => ({ ...spec, value: values[spec.name] ?? '', error: errors[spec.name] }));
  return {
    fields: {
      study: fill(FIELD_GROUPS.study),
      criterion: fill(FIELD_GROUPS.criterion),
      storage: fill(FIELD_GROUPS.storage),
      roles: fill(FIELD_GROUPS.roles),
    },
    declaration: declarationSelects(values).map((entry) => ({ ...entry, error: errors[entry.name] })),
    title: study ? `Edit ${study.title}` : 'New study',
    heading: study ? 'Edit study' : 'New study',
    action,
    study,
    values,
    errors,
    errorCount: Object.keys(errors).length,
    workingOrders: [
      { value: '', label: 'None: only what the data name' },
      { value: '0', label: 'Zero order' },
      { value: '1', label: 'First order' },
      { value: '2', label: 'Second order' },
    ].map((option) => ({ ...option, selected: (values.workingOrder ?? '') === option.value })),
    directions: STUDY_DIRECTIONS.map((direction) => ({
      value: direction,
      selected: values.direction === direction,
    })),
  };
}

const criterion = (lower: number | null, upper: number | null, unit: string) => {
  if (lower !== null && upper !== null) return `${lower}–${upper} ${unit}`;
  if (lower !== null) return `≥ ${lower} ${unit}`;
  return `≤ ${upper} ${unit}`;
};
const condition = (temperature: number | null, humidity: number | null) =>
  [temperature === null ? '' : `${temperature} °C`, humidity === null ? '' : `${humidity} % RH`]
    .filter(Boolean)
    .join(' / ') || 'not stated';

export function studyRoutes(services: AppServices): Router {
  const router = Router();

  router.get('/studies', requireRole(...READERS), async (req, res) => {
    const rows = await listStudies(services.db, req.user!.organisationId);
    renderPage(req, res, 'studies', {
      title: 'Studies',
      canCreate: req.user!.roles.includes('analyst'),
      studies: rows.map((row) => ({
        ...row,
        criterion: criterion(row.lowerLimit, row.upperLimit, row.unit),
        condition: condition(row.storageTemperatureC, row.storageHumidityPercent),
        batchCount: row.batches.length,
      })),
    });
  });

  router.get('/studies/new', requireRole('analyst'), (req, res) => {
    renderPage(
      req,
      res,
      'study-form',
      formLocals({ direction: 'decreasing', unit: '% of label claim' }, {}, '/studies'),
    );
  });

  router.post('/studies', requireRole('analyst'), async (req, res) => {
    const parsed = studyFormSchema.safeParse(req.body);
    if (!parsed.success) {
      return renderPage(
        req,
        res,
        'study-form',
        formLocals(postedValues(req), fieldErrors(parsed.error), '/studies'),
        400,
      );
    }
    const study = await createStudy(services.db, req.user!, parsed.data, auditContext(req));
    res.redirect(303, `/studies/${study.id}?saved=created`);
  });

  router.get('/studies/:studyId', requireRole(...READERS), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    const overview = await studyOverview(services.db, req.user!.organisationId, studyId);
    const { study } = overview;
    const saved = typeof req.query.saved === 'string' ? req.query.saved : '';
    renderPage(req, res, 'study', {
      title: study.title,
      study,
      notice:
        {
          created: 'The study was created.',
          updated: 'Your changes were saved.',
          unchanged: 'Nothing had changed.',
        }[saved] ?? '',
      criterion: criterion(study.lowerLimit, study.upperLimit, study.unit),
      condition: condition(study.storageTemperatureC, study.storageHumidityPercent),
      declaration: declarationSummary(study),
      workingOrderText:
        study.workingOrder === null
          ? null
          : `${['zero', 'first', 'second'][study.workingOrder]} order — ${study.workingOrderReason}`,
      canEdit: req.user!.roles.includes('analyst'),
      uploadLimit: formatBytes(UPLOAD_SIZE_LIMIT_BYTES),
      uploads: overview.uploads.map((upload) => ({
        ...upload,
        size: formatBytes(upload.sizeBytes),
        shortHash: upload.sha256.slice(0, 12),
      })),
      ...(await retiredRows(services.db, req.user!, overview, req.query.includeRetired === '1')),
      versions: await listStudyVersions(services.db, studyId),
    });
  });

  router.get('/studies/:studyId/edit', requireRole('analyst'), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    const study = await findStudy(services.db, req.user!.organisationId, studyId);
    renderPage(req, res, 'study-form', formLocals(formValuesOf(study), {}, `/studies/${study.id}`, study));
  });

  router.post('/studies/:studyId', requireRole('analyst'), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    const current = await findStudy(services.db, req.user!.organisationId, studyId);
    const parsed = studyFormSchema.safeParse(req.body);
    if (!parsed.success) {
      const locals = formLocals(postedValues(req), fieldErrors(parsed.error), `/studies/${studyId}`, current);
      return renderPage(req, res, 'study-form', locals, 400);
    }
    const reason = typeof req.body?.reasonForChange === 'string' ? req.body.reasonForChange : '';
    let changed: string[];
    try {
      ({ changed } = await updateStudy(
        services.db,
        req.user!,
        studyId,
        parsed.data,
        reason,
        auditContext(req),
      ));
    } catch (error) {
      const refusal = reasonRefusal(error);
      if (!refusal) throw error;
      const locals = formLocals(postedValues(req), refusal, `/studies/${studyId}`, current);
      return renderPage(req, res, 'study-form', locals, 400);
    }
    res.redirect(303, `/studies/${studyId}?saved=${changed.length > 0 ? 'updated' : 'unchanged'}`);
  });

  return router;
}
