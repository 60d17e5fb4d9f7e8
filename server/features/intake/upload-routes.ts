import type { RequestHandler } from 'express';
import { Router } from 'express';
import multer from 'multer';
import { recordIdSchema } from '../../../shared/api/studies.ts';
import {
  formatBytes,
  importRequestSchema,
  type PreviewResponse,
  UPLOAD_FIELD,
  UPLOAD_SIZE_LIMIT_BYTES,
  type UploadResponse,
} from '../../../shared/api/uploads.ts';
import { columnMappingSchema } from '../../../shared/intake/column-mapping.ts';
import { studyAttributes } from '../../../shared/kinetics/stability/study-attributes.ts';
import type { AppServices } from '../../platform/app-services.ts';
import { auditContext } from '../../platform/audit/audit-context.ts';
import { requireRole } from '../../platform/auth/route-policy.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { renderPage } from '../../platform/web/render-page.ts';
import { findStudy } from '../studies/index.ts';
import { checkMapping, importUpload, intakeOptionsForStudy } from './datasets.ts';
import { hashingMemoryStorage, isHashedFile } from './hashing-memory-storage.ts';
import { matchingSavedMappings } from './saved-mappings.ts';
import { findUpload, previewSheet, sheetsOfUpload, storeUpload } from './uploads.ts';

const READERS = ['analyst', 'reviewer', 'admin'] as const;

/**
 * One file in memory, at most UPLOAD_SIZE_LIMIT_BYTES, beside at most `fields` text fields (a
 * form with more names its own count). multer's own errors (too large, a broken
 * multipart body) become clear 4xx answers instead of reaching the final handler as a 500.
 */
export function receiveOneFile(fields = 10): RequestHandler {
  const parse = multer({
    storage: hashingMemoryStorage(),
    limits: { fileSize: UPLOAD_SIZE_LIMIT_BYTES, files: 1, fields, parts: fields + 2 },
  }).single(UPLOAD_FIELD);
  return (req, res, next) => {
    parse(req, res, (error: unknown) => {
      if (!error) return next();
      if (error instanceof multer.MulterError && error.code === 'LIMIT_FILE_SIZE') {
        return next(
          new HttpError(
            413,
            `The file is larger than the upload limit of ${formatBytes(UPLOAD_SIZE_LIMIT_BYTES)}. Remove sheets or rows that are not stability data, or split the file, and upload again.`,
          ),
        );
      }
      if (error instanceof multer.MulterError) {
        const detail =
          error.code === 'LIMIT_UNEXPECTED_FILE' ? ` Send one file in the field "${UPLOAD_FIELD}".` : '';
        return next(new HttpError(400, `The upload could not be read: ${error.message}.${detail}`));
      }
      next(
        new HttpError(
          400,
          'The upload could not be read: the multipart form is incomplete or malformed. Try again.',
        ),
      );
    });
  };
}

/** The mapping the preview should check, from `?mapping=<JSON>`; null when none is chosen yet. */
function mappingFromQuery(raw: unknown) {
  if (typeof raw !== 'string' || raw === '') return null;
  let value: unknown;
  try {
    value = JSON.parse(raw);
  } catch {
    throw new HttpError(400, 'The mapping parameter is not valid JSON.');
  }
  return columnMappingSchema.parse(value);
}

export function uploadRoutes(services: AppServices): Router {
  const router = Router();

  router.post('/api/studies/:studyId/uploads', requireRole('analyst'), receiveOneFile(), async (req, res) => {
    const studyId = recordIdSchema.parse(req.params.studyId);
    await findStudy(services.db, req.user!.organisationId, studyId);
    if (!req.file) throw new HttpError(400, `Choose a file to upload (the form field "${UPLOAD_FIELD}").`);
    // Browsers send the name as UTF-8 bytes that busboy reads as Latin-1.
    const fileName = Buffer.from(req.file.originalname, 'latin1').toString('utf8').slice(0, 255) || 'upload';
    const upload = await storeUpload(
      services.db,
      req.user!,
      studyId,
      {
        fileName,
        mediaType: req.file.mimetype,
        bytes: req.file.buffer,
        sha256: isHashedFile(req.file) ? req.file.sha256 : undefined,
      },
      auditContext(req),
    );
    const body: UploadResponse = {
      uploadId: upload.id,
      sha256: upload.sha256,
      mapUrl: `/uploads/${upload.id}/map`,
    };
    res.status(201).json(body);
  });

  router.get('/uploads/:uploadId/map', requireRole('analyst'), async (req, res) => {
    const uploadId = recordIdSchema.parse(req.params.uploadId);
    const upload = await findUpload(services.db, req.user!.organisationId, uploadId);
    const study = await findStudy(services.db, req.user!.organisationId, upload.studyId);
    renderPage(req, res, 'upload-map', {
      title: `Map columns · ${upload.fileName}`,
      upload: { id: upload.id, fileName: upload.fileName, format: upload.format, sha256: upload.sha256 },
      study: { id: study.id, title: study.title, unit: study.unit },
      // The study's attributes, for the island to match value columns to (issue 15 §1).
      attributes: studyAttributes(study).map((attribute) => ({ name: attribute.name, unit: attribute.unit })),
    });
  });

  router.get('/uploads/:uploadId/original', requireRole(...READERS), async (req, res) => {
    const uploadId = recordIdSchema.parse(req.params.uploadId);
    const upload = await findUpload(services.db, req.user!.organisationId, uploadId);
    // Served as what the content is (never the type the browser claimed), and always as a download.
    const type =
      upload.format === 'csv'
        ? 'text/csv'
        : 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
    res.attachment(upload.fileName).type(type).set('x-content-sha256', upload.sha256).send(upload.content);
  });

  router.get('/api/uploads/:uploadId/preview', requireRole(...READERS), async (req, res) => {
    const uploadId = recordIdSchema.parse(req.params.uploadId);
    const mapping = mappingFromQuery(req.query.mapping);
    const upload = await findUpload(services.db, req.user!.organisationId, uploadId);
    const sheets = await sheetsOfUpload(upload);
    const study = mapping ? await findStudy(services.db, req.user!.organisationId, upload.studyId) : null;
    const body: PreviewResponse = {
      upload: {
        id: upload.id,
        studyId: upload.studyId,
        fileName: upload.fileName,
        format: upload.format === 'csv' ? 'csv' : 'xlsx',
        sizeBytes: upload.sizeBytes,
        sha256: upload.sha256,
      },
      sheets: sheets.map(previewSheet),
      savedMappings: await matchingSavedMappings(services.db, req.user!.organisationId, sheets),
      check: mapping && study ? checkMapping(sheets, mapping, intakeOptionsForStudy(study, mapping)) : null,
    };
    res.json(body);
  });

  router.post('/api/uploads/:uploadId/import', requireRole('analyst'), async (req, res) => {
    const uploadId = recordIdSchema.parse(req.params.uploadId);
    const request = importRequestSchema.parse(req.body);
    const body = await importUpload(
      services.db,
      req.user!,
      uploadId,
      request.mapping,
      request.saveMappingAs,
      auditContext(req),
      request.duplicateReason,
    );
    res.status(201).json(body);
  });

  return router;
}
