import { type Request, Router } from 'express';
import {
  BLANK_PRESET_ROWS,
  CONFIDENCE_LEVELS,
  type OrganisationSettingsResponse,
  organisationSettingsFormSchema,
  organisationSettingsFromForm,
  PRESET_DIRECTIONS,
  parseReportNumberFormat,
  SECURITY_BOUNDS,
  securitySettingsFormSchema,
  settingsFieldErrors,
} from '../../../shared/api/settings.ts';
import { TIME_UNITS } from '../../../shared/kinetics/units.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { takeNotice } from '../../platform/web/admin-notice.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { nextReportNumber } from '../reports/index.ts';
import {
  loadOrganisationSettings,
  type OrganisationSettings,
  saveOrganisationSettings,
  saveSecuritySettings,
  saveTemplateChangeControl,
} from './organisation-settings.ts';
import { reviewChecklistRoutes } from './review-checklist-routes.ts';

type Values = Record<string, unknown>;

const FIELD_LABELS: Record<string, string> = {
  signatureMeanings: 'signature meanings',
  defaultConfidenceLevel: 'default confidence level',
  defaultTimeUnit: 'default time unit',
  defaultValueUnit: 'default value unit',
  acceptancePresets: 'acceptance-criterion presets',
  timeZone: 'time zone',
  reportNumberFormat: 'report number format',
  passwordMinLength: 'minimum password length',
  passwordRequireClasses: 'character classes required',
  lockoutThreshold: 'failed sign-ins before locking',
  lockoutMinutes: 'lockout period',
  templatePublicationNeedsSecondAdmin: 'second admin approves template publications',
};

const limitText = (value: number | null) => (value === null ? '' : String(value));

/** The saved settings as the form's text values. */
function formValues(settings: OrganisationSettings): Values {
  const values: Values = {
    signatureMeanings: settings.signatureMeanings.join('\n'),
    defaultConfidenceLevel: settings.defaultConfidenceLevel.toFixed(2),
    defaultTimeUnit: settings.defaultTimeUnit,
    defaultValueUnit: settings.defaultValueUnit,
    timeZone: settings.timeZone,
    reportNumberFormat: settings.reportNumberFormat,
    passwordMinLength: String(settings.passwordMinLength),
    passwordRequireClasses: String(settings.passwordRequireClasses),
    lockoutThreshold: String(settings.lockoutThreshold),
    lockoutMinutes: String(settings.lockoutMinutes),
    templatePublicationNeedsSecondAdmin: settings.templatePublicationNeedsSecondAdmin,
  };
  settings.acceptancePresets.forEach((preset, row) => {
    values[`preset-${row}-attribute`] = preset.attribute;
    values[`preset-${row}-unit`] = preset.unit;
    values[`preset-${row}-direction`] = preset.direction;
    values[`preset-${row}-lowerLimit`] = limitText(preset.lowerLimit);
    values[`preset-${row}-upperLimit`] = limitText(preset.upperLimit);
  });
  return values;
}

function presetRows(values: Values, errors: Record<string, string>) {
  // Rows with something typed in a text field (a direction alone is the blank row's default).
  const used = Object.entries(values)
    .filter(([key, value]) => !key.endsWith('-direction') && String(value ?? '').trim() !== '')
    .map(([key]) => /^preset-(\d+)-/.exec(key)?.[1])
    .filter((row): row is string => row !== undefined)
    .map(Number);
  const count = (used.length === 0 ? 0 : Math.max(...used) + 1) + BLANK_PRESET_ROWS;
  return Array.from({ length: count }, (_unused, row) => {
    const field = (name: string) => ({
      name: `preset-${row}-${name}`,
      value: String(values[`preset-${row}-${name}`] ?? ''),
      error: errors[`acceptancePresets.${row}.${name}`],
    });
    const direction = String(values[`preset-${row}-direction`] ?? 'decreasing');
    return {
      row,
      number: row + 1,
      attribute: field('attribute'),
      unit: field('unit'),
      lowerLimit: field('lowerLimit'),
      upperLimit: field('upperLimit'),
      directionName: `preset-${row}-direction`,
      directions: PRESET_DIRECTIONS.map((value) => ({ value, selected: value === direction })),
      hasError: Object.keys(errors).some((key) => key.startsWith(`acceptancePresets.${row}.`)),
    };
  });
}

export function settingsRoutes(services: AppServices): Router {
  const router = Router();
  const { db } = services;
  router.use(reviewChecklistRoutes(services));

  async function renderSettings(
    req: Request,
    res: Parameters<typeof renderPage>[1],
    options: {
      values?: Values;
      errors?: Record<string, string>;
      status?: number;
      previewFormat?: string;
    } = {},
  ) {
    const organisationId = req.user!.organisationId;
    const saved = await loadOrganisationSettings(db, organisationId);
    const values = { ...formValues(saved), ...options.values };
    const errors = options.errors ?? {};
    const previewFormat = options.previewFormat ?? saved.reportNumberFormat;
    const previewOk = parseReportNumberFormat(previewFormat).ok;
    const organisationErrors = Object.keys(errors).filter((key) => !(key in SECURITY_BOUNDS)).length;
    const securityErrors = Object.keys(errors).filter((key) => key in SECURITY_BOUNDS).length;
    renderPage(
      req,
      res,
      'admin-settings',
      {
        title: 'Organisation settings',
        notice: takeNotice(req),
        values,
        errors,
        organisationErrors,
        securityErrors,
        presets: presetRows(values, errors),
        confidenceLevels: CONFIDENCE_LEVELS.map((level) => ({
          value: level,
          selected: level === String(values.defaultConfidenceLevel),
        })),
        timeUnits: TIME_UNITS.map((unit) => ({ value: unit, selected: unit === values.defaultTimeUnit })),
        timeZones: Intl.supportedValuesOf('timeZone'),
        preview: {
          format: previewFormat,
          number: previewOk ? await nextReportNumber(db, organisationId, previewFormat) : null,
          unsaved: previewFormat !== saved.reportNumberFormat,
        },
        bounds: SECURITY_BOUNDS,
      },
      options.status ?? 200,
    );
  }

  router.get('/admin/settings', requireRole('admin'), async (req, res) => {
    await renderSettings(req, res);
  });

  router.post('/admin/settings', requireRole('admin'), async (req, res) => {
    const body = (req.body ?? {}) as Values;
    const posted = Object.fromEntries(
      Object.entries(body).filter(([key]) => key !== '_csrf' && key !== 'intent'),
    );
    if (body.intent === 'preview') {
      const format = String(body.reportNumberFormat ?? '').trim();
      const problems = parseReportNumberFormat(format);
      return renderSettings(req, res, {
        values: posted,
        previewFormat: format,
        errors: problems.ok ? {} : { reportNumberFormat: problems.problems.join(' ') },
        status: problems.ok ? 200 : 400,
      });
    }
    const parsed = organisationSettingsFormSchema.safeParse(organisationSettingsFromForm(body));
    if (!parsed.success) {
      const typed = String(body.reportNumberFormat ?? '').trim();
      return renderSettings(req, res, {
        values: posted,
        errors: settingsFieldErrors(parsed.error),
        status: 400,
        ...(parseReportNumberFormat(typed).ok ? { previewFormat: typed } : {}),
      });
    }
    let changed: string[];
    try {
      ({ changed } = await saveOrganisationSettings(db, req.user!, parsed.data, auditContext(req)));
    } catch (error) {
      if (!(error instanceof HttpError && error.status === 400 && Array.isArray(error.details))) throw error;
      const details = error.details as { field: string; message: string }[];
      const errors = Object.fromEntries(details.map((detail) => [detail.field, detail.message]));
      return renderSettings(req, res, { values: posted, errors, status: 400 });
    }
    req.session.adminNotice = {
      kind: 'done',
      text:
        changed.length > 0
          ? `Saved: ${changed.map((key) => FIELD_LABELS[key] ?? key).join(', ')}. The change is in the audit trail.`
          : 'Nothing had changed.',
    };
    req.session.save(() => res.redirect(303, '/admin/settings'));
  });

  router.post('/admin/settings/security', requireRole('admin'), async (req, res) => {
    const body = (req.body ?? {}) as Values;
    const parsed = securitySettingsFormSchema.safeParse(body);
    if (!parsed.success) {
      const posted = Object.fromEntries(Object.keys(SECURITY_BOUNDS).map((key) => [key, body[key] ?? '']));
      return renderSettings(req, res, {
        values: posted,
        errors: settingsFieldErrors(parsed.error),
        status: 400,
      });
    }
    const { changed } = await saveSecuritySettings(db, req.user!, parsed.data, auditContext(req));
    req.session.adminNotice = {
      kind: 'done',
      text:
        changed.length > 0
          ? `Saved: ${changed.map((key) => FIELD_LABELS[key] ?? key).join(', ')}. New passwords and the next sign-ins follow it.`
          : 'Nothing had changed.',
    };
    req.session.save(() => res.redirect(303, '/admin/settings#security'));
  });

  router.post('/admin/settings/change-control', requireRole('admin'), async (req, res) => {
    const body = (req.body ?? {}) as Values;
    // A checkbox posts its value only when ticked: absent means off.
    const needsSecondAdmin = body.templatePublicationNeedsSecondAdmin === 'on';
    const { changed } = await saveTemplateChangeControl(db, req.user!, needsSecondAdmin, auditContext(req));
    req.session.adminNotice = {
      kind: 'done',
      text:
        changed.length === 0
          ? 'Nothing had changed.'
          : needsSecondAdmin
            ? 'Saved: from now on a template publication or roll back waits for a second admin. The change is in the audit trail.'
            : 'Saved: template publications take effect at once again. The change is in the audit trail.',
    };
    req.session.save(() => res.redirect(303, '/admin/settings#change-control'));
  });

  router.get('/api/admin/settings', requireRole('admin'), async (req, res) => {
    const settings = await loadOrganisationSettings(db, req.user!.organisationId);
    const body: OrganisationSettingsResponse = {
      ...settings,
      nextReportNumber: await nextReportNumber(db, req.user!.organisationId),
    };
    res.json(body);
  });

  return router;
}
